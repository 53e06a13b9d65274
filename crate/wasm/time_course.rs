//! The time course on the page: a binned table, spike events with a trial table, or an NWB file's extract.

use super::request::{err, Request};
use crate::analyses::time_course::TimePlan;
use crate::input;
use wasm_bindgen::JsValue;

pub(super) fn load(r: Request) -> Result<TimePlan, JsValue> {
    let settings = r
        .recipe
        .time
        .as_ref()
        .ok_or_else(|| err("this recipe has no time settings"))?;
    let data = input::time_course(&r.files, &r.recipe.columns, &settings.input).map_err(err)?;
    TimePlan::new(data, &r.recipe).map_err(err)
}
