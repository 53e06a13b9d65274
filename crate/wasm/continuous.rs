//! Decoding a continuous or circular variable on the page: a trial table, or any recording the time course reads.

use super::request::{err, Request};
use crate::analyses::continuous::ContinuousPlan;
use wasm_bindgen::JsValue;

pub(super) fn load(r: Request) -> Result<ContinuousPlan, JsValue> {
    ContinuousPlan::from_files(&r.files, &r.recipe).map_err(err)
}
