//! What the page hands the core: its files and recipe, the analysis's options; and the core's errors as the page
//! receives them.

use crate::input::FileBytes;
use crate::recipe::Recipe;
use serde_json::Value;
use wasm_bindgen::JsValue;

/// A core error as the page receives it: its message.
pub(super) fn err(e: impl std::fmt::Display) -> JsValue {
    JsValue::from_str(&e.to_string())
}

/// What the page's data worker reads: one file, or two (spike events, then the trial table; `name_b` empty for
/// one), and the recipe that says which columns and windows to read.
pub(super) struct Request<'a> {
    pub files: Vec<FileBytes<'a>>,
    pub recipe: Recipe,
}

/// A recipe from the page (already checked by the form; the core checks it again).
pub(super) fn recipe(json: &str) -> Result<Recipe, JsValue> {
    Recipe::from_json("recipe", json).map_err(err)
}

/// An analysis's own options (JSON; the neuron analyses' draws), or null.
pub(super) fn options(json: &str) -> Result<Value, JsValue> {
    if json.trim().is_empty() {
        return Ok(Value::Null);
    }
    serde_json::from_str(json).map_err(|e| err(format!("malformed options: {e}")))
}

impl<'a> Request<'a> {
    pub(super) fn new(
        name_a: &'a str,
        bytes_a: &'a [u8],
        name_b: &'a str,
        bytes_b: &'a [u8],
        recipe_json: &str,
    ) -> Result<Request<'a>, JsValue> {
        let mut files = vec![FileBytes {
            name: name_a,
            bytes: bytes_a,
        }];
        if !name_b.is_empty() {
            files.push(FileBytes {
                name: name_b,
                bytes: bytes_b,
            });
        }
        Ok(Request {
            files,
            recipe: recipe(recipe_json)?,
        })
    }
}
