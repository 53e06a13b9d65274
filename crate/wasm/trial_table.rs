//! The trial-table analysis on the page.

use super::data::Decoded;
use super::request::err;
use crate::analyses::trial_table::Plan;
use crate::recipe::Recipe;
use wasm_bindgen::JsValue;

pub(super) fn plan(data: Decoded, recipe: &Recipe) -> Result<Plan, JsValue> {
    let Decoded::Table(data) = data else {
        return Err(err("a trial-table analysis reads a trial table"));
    };
    Plan::new(data, recipe).map_err(err)
}
