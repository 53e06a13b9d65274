//! A study on the page: the study table among the files (or the session list in the options), every session's
//! files (NWB files as their extracts), and the study's options (`pool`, `leave_out_flagged`, `group_draws`,
//! `alpha`, and `sessions` or `table`). The core does the rest (`analyses::study::from_files`), so the page's JSON
//! is the CLI's.

use super::request::{err, Files, Request};
use crate::analyses::study::{assess_files, from_files, StudyPlan, StudyRequest};
use wasm_bindgen::prelude::*;

/// The options a study reads; any other key is refused rather than ignored.
const OPTIONS: [&str; 6] = [
    "pool",
    "leave_out_flagged",
    "group_draws",
    "alpha",
    "sessions",
    "table",
];

fn study_request(r: &Request) -> Result<StudyRequest, JsValue> {
    if r.options.is_null() {
        return Ok(StudyRequest::default());
    }
    if let Some(key) = r
        .options
        .as_object()
        .and_then(|o| o.keys().find(|k| !OPTIONS.contains(&k.as_str())))
    {
        return Err(err(format!("unknown study option '{key}'")));
    }
    serde_json::from_value(r.options.clone())
        .map_err(|e| err(format!("malformed study options: {e}")))
}

pub(super) fn load(r: Request) -> Result<StudyPlan, JsValue> {
    let request = study_request(&r)?;
    from_files(&r.files, &r.recipe, request).map_err(err)
}

/// The sessions of a study as the page lists them before running: each session's subject, files, trials, neurons
/// and class counts, and the sessions that cannot enter as set up with the reason (JSON), whether or not the user
/// has agreed to leave them out.
#[wasm_bindgen]
pub fn study_sessions(
    files: &Files,
    recipe_json: &str,
    options_json: &str,
) -> Result<String, JsValue> {
    let r = Request::new(files, recipe_json, options_json)?;
    let request = study_request(&r)?;
    let assessed = assess_files(&r.files, &r.recipe, request).map_err(err)?;
    Ok(assessed.listing().to_string())
}
