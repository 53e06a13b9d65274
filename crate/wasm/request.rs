//! What a page run hands the core: its files, its recipe and the analysis's options; and the core's errors as the
//! page receives them.

use crate::input::FileBytes;
use crate::recipe::Recipe;
use serde_json::Value;
use wasm_bindgen::JsValue;

/// A core error as the page receives it: its message.
pub(super) fn err(e: impl std::fmt::Display) -> JsValue {
    JsValue::from_str(&e.to_string())
}

/// What a page run reads: one file, or two (spike events, then the trial table; `name_b` empty for one), the
/// recipe, and the analysis's own options (JSON; the neuron analyses' draws).
pub(super) struct Request<'a> {
    pub files: Vec<FileBytes<'a>>,
    pub recipe: Recipe,
    pub options: Value,
}

impl<'a> Request<'a> {
    pub(super) fn new(
        name_a: &'a str,
        bytes_a: &'a [u8],
        name_b: &'a str,
        bytes_b: &'a [u8],
        recipe_json: &str,
        options_json: &str,
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
            recipe: Recipe::from_json("recipe", recipe_json).map_err(err)?,
            options: if options_json.trim().is_empty() {
                Value::Null
            } else {
                serde_json::from_str(options_json)
                    .map_err(|e| err(format!("malformed options: {e}")))?
            },
        })
    }
}
