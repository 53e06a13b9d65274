//! A study on the page: the study table among the files (or the session list in the options), every session's
//! files (NWB files as their extracts), and the study's options (`pool`, `leave_out_flagged`, `group_draws`,
//! `alpha`, and `sessions` or `table`). The core does the rest (`analyses::study::from_files`), so the page's JSON
//! is the CLI's.

use super::data::Decoded;
use super::request::{err, options, recipe, Files};
use crate::analyses::study::{assess_files, from_files, StudyPlan, StudyRequest};
use crate::recipe::Recipe;
use serde_json::Value;
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

fn study_request(options: &Value) -> Result<StudyRequest, JsValue> {
    if options.is_null() {
        return Ok(StudyRequest::default());
    }
    if let Some(key) = options
        .as_object()
        .and_then(|o| o.keys().find(|k| !OPTIONS.contains(&k.as_str())))
    {
        return Err(err(format!("unknown study option '{key}'")));
    }
    serde_json::from_value(options.clone())
        .map_err(|e| err(format!("malformed study options: {e}")))
}

pub(super) fn plan(data: Decoded, recipe: &Recipe, options: &Value) -> Result<StudyPlan, JsValue> {
    let Decoded::Files(files) = data else {
        return Err(err("a study reads its sessions' files"));
    };
    from_files(&files.bytes(), recipe, study_request(options)?).map_err(err)
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
    let request = study_request(&options(options_json)?)?;
    let assessed = assess_files(&files.bytes(), &recipe(recipe_json)?, request).map_err(err)?;
    Ok(assessed.listing().to_string())
}

/// The rows of a study table (file, session, subject, trials) as JSON: the page lists them with each subject
/// editable and, when the user changes one, hands the rows back as the `sessions` option.
#[wasm_bindgen]
pub fn study_rows(name: &str, bytes: &[u8]) -> Result<String, JsValue> {
    let table = crate::input::study::read(name, bytes).map_err(err)?;
    Ok(serde_json::to_string(&table.sessions).expect("rows serialise"))
}
