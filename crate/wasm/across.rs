//! Generalization across conditions on the page: a trial table, or any recording the time course reads.

use super::request::{err, Request};
use crate::analyses::across::AcrossPlan;
use wasm_bindgen::JsValue;

pub(super) fn load(r: Request) -> Result<AcrossPlan, JsValue> {
    AcrossPlan::from_files(&r.files, &r.recipe).map_err(err)
}
