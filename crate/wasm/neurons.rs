//! The neuron analyses on the page; options `{"draws": N}`.

use super::request::{err, Request};
use crate::analyses::neurons::NeuronsPlan;
use crate::input;
use wasm_bindgen::JsValue;

pub(super) fn load(r: Request) -> Result<NeuronsPlan, JsValue> {
    let [file] = r.files[..] else {
        return Err(err("the neuron analyses read one trial table"));
    };
    let draws = r.options["draws"]
        .as_u64()
        .ok_or_else(|| err("the neuron analyses need the number of draws per size"))?;
    let data = input::trial_table(file.name, file.bytes, &r.recipe.columns).map_err(err)?;
    NeuronsPlan::new(data, &r.recipe, draws as usize).map_err(err)
}
