//! popdecode: cross-validated decoding of task conditions from neural population activity.
//!
//! One core, several faces. The core reads a trial table from bytes ([`data`]), checks it against a [`recipe`],
//! splits the analysis into independent tasks ([`protocol`]), and assembles their outcomes into a [`report`]. It
//! touches no filesystem and starts no threads: the CLI (`main.rs`) runs tasks on threads, the page on Web Workers.
//!
//! ```
//! use popdecode::{data::Dataset, protocol::Plan, recipe::Recipe, report, simulate};
//! let csv = simulate::csv(&simulate::Scenario::odours());
//! let mut recipe = Recipe::new("odour");
//! recipe.repeats = 2;
//! recipe.shuffles = 0;
//! let data = Dataset::from_csv("odours.csv", csv.as_bytes(), &recipe.columns).unwrap();
//! let plan = Plan::new(&data, &recipe).unwrap();
//! let result = report::run_all(&plan);
//! assert!(result.summary.accuracy.mean > 0.5); // four odours: chance is 0.25
//! ```

pub mod data;
pub mod decoders;
pub mod error;
pub mod neurons;
pub mod protocol;
pub mod pseudo;
pub mod recipe;
pub mod report;
pub mod resample;
pub mod rng;
pub mod simulate;
pub mod stats;
pub mod timecourse;

pub use error::{Error, Result};

#[cfg(target_arch = "wasm32")]
pub mod wasm;
