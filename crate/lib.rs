//! popdecode: cross-validated decoding of task conditions from neural population activity.
//!
//! One core, several faces. The layers, each importing only from those listed before it:
//!
//! 1. foundation: [`error`], [`rng`], the [`recipe`] (plain data every layer may read), [`simulate`] (invented data),
//!    [`stop`] (a request to stop work whose result will not be read)
//! 2. [`data`]: the in-memory data every analysis works on
//! 3. [`input`]: readers of every input format, producing `data`
//! 4. [`resample`]: balancing, folds, permutations, pseudo-trials, scoring
//! 5. [`decoders`]: the fitted pipeline and every decoder
//! 6. [`stats`]: summaries, permutation p-values, the binomial threshold, cluster tests, group tests across sessions
//! 7. [`report`]: what every report shares (text and SVG primitives, methods sentences)
//! 8. [`analyses`]: one folder per analysis
//! 9. faces: the CLI (`crate/cli/`, a binary of its own) and the page's bindings (`wasm`); [`memory`] is the
//!    native faces' one allocator setting
//!
//! The core touches no filesystem and starts no threads: faces read files and decide where tasks run.
//!
//! ```
//! use popdecode::analyses::trial_table::{run_all, Plan};
//! use popdecode::{input, recipe::Recipe, simulate};
//! let csv = simulate::csv(&simulate::Scenario::odours());
//! let mut recipe = Recipe::new("odour");
//! recipe.repeats = 2;
//! recipe.shuffles = 0;
//! let data = input::trial_table("odours.csv", csv.as_bytes(), &recipe.columns).unwrap();
//! let plan = Plan::new(data, &recipe).unwrap();
//! let result = run_all(&plan);
//! assert!(result.summary.accuracy.mean > 0.5); // four odours: chance is 0.25
//! ```

pub mod analyses;
pub mod data;
pub mod decoders;
pub mod error;
pub mod input;
#[cfg(not(target_arch = "wasm32"))]
pub mod memory;
pub mod recipe;
pub mod report;
pub mod resample;
pub mod rng;
pub mod simulate;
pub mod stats;
pub mod stop;

pub use error::{Error, Result};

#[cfg(target_arch = "wasm32")]
pub mod wasm;
