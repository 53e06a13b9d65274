//! What a page run hands the core: its files, its recipe and the analysis's options; and the core's errors as the
//! page receives them.

use crate::input::FileBytes;
use crate::recipe::Recipe;
use serde_json::Value;
use wasm_bindgen::prelude::*;

/// A core error as the page receives it: its message.
pub(super) fn err(e: impl std::fmt::Display) -> JsValue {
    JsValue::from_str(&e.to_string())
}

/// Named files handed to the core at once (a study's table and sessions; any analysis's files): the page adds each
/// file (its bytes are copied into the core's memory) and passes the set to `prepare_files`, `Runner.with_files` and
/// `finish_files`.
#[wasm_bindgen]
#[derive(Default)]
pub struct Files {
    items: Vec<(String, Vec<u8>)>,
}

#[wasm_bindgen]
impl Files {
    #[wasm_bindgen(constructor)]
    pub fn new() -> Files {
        Files::default()
    }

    /// Add a file under its name (for an NWB file, its extract under the file's name).
    pub fn add(&mut self, name: &str, bytes: &[u8]) {
        self.items.push((name.to_string(), bytes.to_vec()));
    }

    /// How many files were added.
    pub fn count(&self) -> usize {
        self.items.len()
    }
}

impl Files {
    /// One file, or two (spike events, then the trial table; `name_b` empty for one): what the first bridge passed.
    pub(super) fn pair(name_a: &str, bytes_a: &[u8], name_b: &str, bytes_b: &[u8]) -> Files {
        let mut f = Files::new();
        f.add(name_a, bytes_a);
        if !name_b.is_empty() {
            f.add(name_b, bytes_b);
        }
        f
    }
}

/// What a page run reads: its files, the recipe, and the analysis's own options (JSON; the neuron analyses' draws,
/// a study's options and session list).
pub(super) struct Request<'a> {
    pub files: Vec<FileBytes<'a>>,
    pub recipe: Recipe,
    pub options: Value,
}

impl<'a> Request<'a> {
    pub(super) fn new(
        files: &'a Files,
        recipe_json: &str,
        options_json: &str,
    ) -> Result<Request<'a>, JsValue> {
        Ok(Request {
            files: files
                .items
                .iter()
                .map(|(name, bytes)| FileBytes { name, bytes })
                .collect(),
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
