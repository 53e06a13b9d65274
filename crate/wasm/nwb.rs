//! NWB files dropped on the page, read lazily by a worker into the extract the page and its pool decode from.

use super::dropped::DroppedFile;
use super::request::err;
use crate::input::extract;
use wasm_bindgen::prelude::*;

/// Read the dropped NWB file (`size` bytes) lazily into the extract the page and its workers decode from.
#[wasm_bindgen]
pub fn extract_nwb(name: &str, size: f64) -> Result<Vec<u8>, JsValue> {
    extract::read_nwb(name, DroppedFile::new(size)).map_err(err)
}

/// What an NWB recording holds (units, spikes, trials, the trials and units tables' columns, the file's SHA-256),
/// as JSON, from its extract (or the whole file).
#[wasm_bindgen]
pub fn inspect_nwb(name: &str, bytes: &[u8]) -> Result<String, JsValue> {
    let (rec, origin) = extract::read_any(name, bytes).map_err(err)?;
    let mut summary = serde_json::to_value(rec.summary()).expect("a summary serialises");
    summary["sha256"] = origin.sha256.into();
    Ok(summary.to_string())
}
