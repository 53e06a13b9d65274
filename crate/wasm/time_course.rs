//! The time course on the page: a binned table, spike events with a trial table, or an NWB file's extract.

use super::data::Decoded;
use super::request::err;
use crate::analyses::time_course::TimePlan;
use crate::recipe::Recipe;
use wasm_bindgen::JsValue;

pub(super) fn plan(data: Decoded, recipe: &Recipe) -> Result<TimePlan, JsValue> {
    let Decoded::Time(data) = data else {
        return Err(err("a time course reads a recording over time"));
    };
    TimePlan::new(data, recipe).map_err(err)
}
