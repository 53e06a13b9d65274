//! The neuron analyses on the page; options `{"draws": N}`.

use super::data::Decoded;
use super::request::err;
use crate::analyses::neurons::NeuronsPlan;
use crate::recipe::Recipe;
use serde_json::Value;
use wasm_bindgen::JsValue;

pub(super) fn plan(
    data: Decoded,
    recipe: &Recipe,
    options: &Value,
) -> Result<NeuronsPlan, JsValue> {
    let Decoded::Table(data) = data else {
        return Err(err("the neuron analyses read one trial table"));
    };
    let draws = options["draws"]
        .as_u64()
        .ok_or_else(|| err("the neuron analyses need the number of draws per size"))?;
    NeuronsPlan::new(data, recipe, draws as usize).map_err(err)
}
