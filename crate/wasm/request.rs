//! What the page hands the core: its files and recipe, the analysis's options; and the core's errors as the page
//! receives them.

use crate::input::FileBytes;
use crate::recipe::Recipe;
use serde_json::Value;
use wasm_bindgen::prelude::*;

/// A core error as the page receives it: its message.
pub(super) fn err(e: impl std::fmt::Display) -> JsValue {
    JsValue::from_str(&e.to_string())
}

/// Named files handed to the core at once (a study's table and its sessions' files): the page adds each file (its
/// bytes are copied into the core's memory) and passes the set to `Loaded.with_files`, `Runner.with_files` and
/// `study_sessions`.
#[wasm_bindgen]
#[derive(Clone, Default)]
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
    /// Owned copies of named files.
    pub(super) fn from_items(items: Vec<(String, Vec<u8>)>) -> Files {
        Files { items }
    }

    /// The files as the core's readers take them.
    pub(super) fn bytes(&self) -> Vec<FileBytes<'_>> {
        self.items
            .iter()
            .map(|(name, bytes)| FileBytes { name, bytes })
            .collect()
    }

    /// The files' names, in order.
    pub(super) fn names(&self) -> Vec<&str> {
        self.items.iter().map(|(n, _)| n.as_str()).collect()
    }

    /// The bytes of file `i` (empty past the end).
    pub(super) fn file(&self, i: usize) -> &[u8] {
        self.items.get(i).map_or(&[], |(_, b)| b.as_slice())
    }
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
