//! The page's bridge to the core (wasm-bindgen). Plain strings in and out (JSON), so the surface stays small.
//!
//! Every analysis reaches the page through one shape ([`job`]): the data worker's [`job::Loaded`] reads the files
//! once ([`data`]), `prepare` checks the design and lists the tasks, each run worker's [`job::Runner`] gets the
//! decoded matrix once and runs tasks one at a time, and `finish` assembles the outcomes into the result, its text,
//! methods paragraph, figures and tables. Each analysis adds only its plan builder (`trial_table.rs`,
//! `time_course.rs`, `neurons.rs`, `power.rs`, `study.rs`, `across.rs`, `continuous.rs`). A study, generalization
//! across conditions and continuous decoding read their files through the core's own door, so their run workers get
//! the files ([`request::Files`]) instead of a decoded matrix.
//!
//! Nothing here may panic across the boundary unnoticed: every fallible call returns `Result<_, JsValue>` with the
//! core's message, and a panic hook records the message of any bug, which the page reads with [`last_panic`] when
//! the wasm instance traps, instead of dying silently.

mod across;
mod continuous;
mod data;
mod dropped;
mod inspect;
mod job;
mod neurons;
mod nwb;
mod power;
mod request;
mod shared;
mod study;
mod time_course;
mod trial_table;

use crate::recipe::Recipe;
use request::err;
use std::sync::Mutex;
use wasm_bindgen::prelude::*;

static PANIC: Mutex<String> = Mutex::new(String::new());

/// Install the panic recorder; the page calls this once per instance.
#[wasm_bindgen]
pub fn start() {
    std::panic::set_hook(Box::new(|info| {
        if let Ok(mut m) = PANIC.lock() {
            *m = info.to_string();
        }
    }));
}

/// The message of the last panic, if any (read after a trap).
#[wasm_bindgen]
pub fn last_panic() -> String {
    PANIC.lock().map(|m| m.clone()).unwrap_or_default()
}

/// The address of this worker's stop flag in the memory it shares with the page's other workers
/// ([`crate::stop`]): the page sets it to let the worker go without terminating it.
#[wasm_bindgen]
pub fn stop_address() -> usize {
    crate::stop::address()
}

#[wasm_bindgen]
pub fn version() -> String {
    env!("CARGO_PKG_VERSION").to_string()
}

/// The default recipe for a label column, as JSON.
#[wasm_bindgen]
pub fn default_recipe(label: &str) -> String {
    Recipe::new(label).to_json()
}

/// Validate a recipe file's text and return it normalised (or the reason it is refused).
#[wasm_bindgen]
pub fn check_recipe(text: &str) -> Result<String, JsValue> {
    Recipe::from_json("recipe file", text)
        .map(|r| r.to_json())
        .map_err(err)
}
