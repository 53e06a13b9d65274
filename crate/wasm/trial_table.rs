//! The trial-table analysis on the page.

use super::request::{err, Request};
use crate::analyses::trial_table::Plan;
use crate::input;
use wasm_bindgen::JsValue;

pub(super) fn load(r: Request) -> Result<Plan, JsValue> {
    let [file] = r.files[..] else {
        return Err(err("a trial table is one file"));
    };
    let data = input::trial_table(file.name, file.bytes, &r.recipe.columns).map_err(err)?;
    Plan::new(data, &r.recipe).map_err(err)
}
