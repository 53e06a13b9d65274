//! Decoding a continuous or circular variable on the page: a trial table, or any recording the time course reads,
//! through the plan's own door (`from_files`), as the CLI reads them.

use super::data::Decoded;
use super::request::err;
use crate::analyses::continuous::ContinuousPlan;
use crate::recipe::Recipe;
use wasm_bindgen::JsValue;

pub(super) fn plan(data: Decoded, recipe: &Recipe) -> Result<ContinuousPlan, JsValue> {
    let Decoded::Files(files) = data else {
        return Err(err("decoding a continuous variable reads its files"));
    };
    ContinuousPlan::from_files(&files.bytes(), recipe).map_err(err)
}
