//! The power analysis on the page (planning the next recording). Its settings travel in the recipe's `power` field
//! (absent: the defaults), so the recipe the page exports reproduces the run on the command line.

use super::data::Decoded;
use super::request::err;
use crate::analyses::power::PowerPlan;
use crate::recipe::{power, PowerSettings, Recipe};
use wasm_bindgen::prelude::*;

pub(super) fn plan(data: Decoded, recipe: &Recipe) -> Result<PowerPlan, JsValue> {
    let Decoded::Table(data) = data else {
        return Err(err("the power analysis reads one trial table"));
    };
    PowerPlan::new(data, recipe).map_err(err)
}

/// The recipe a power analysis starts from for a label column, as JSON: each subsample's protocol small enough to
/// be run thousands of times (the command line's defaults), and the default power settings.
#[wasm_bindgen]
pub fn default_power_recipe(label: &str) -> String {
    let mut recipe = Recipe::new(label);
    recipe.repeats = power::REPEATS;
    recipe.shuffles = power::SHUFFLES;
    recipe.power = Some(PowerSettings::default());
    recipe.to_json()
}
