//! Generalization across conditions on the page: a trial table, or any recording the time course reads, through
//! the plan's own door (`from_files`), as the CLI reads them.

use super::data::Decoded;
use super::request::err;
use crate::analyses::across::AcrossPlan;
use crate::recipe::Recipe;
use wasm_bindgen::JsValue;

pub(super) fn plan(data: Decoded, recipe: &Recipe) -> Result<AcrossPlan, JsValue> {
    let Decoded::Files(files) = data else {
        return Err(err("generalization across conditions reads its files"));
    };
    AcrossPlan::from_files(&files.bytes(), recipe).map_err(err)
}
