//! Analyses, one folder each: the trial table ([`trial_table`]), the time course ([`time_course`]), what each
//! neuron contributes ([`neurons`]), studies of many sessions ([`study`]), generalization across conditions
//! ([`across`]), decoding a continuous or circular variable ([`continuous`]) and planning the next recording
//! ([`power`]); [`over_time`] holds what the analyses over time share. Each folder holds its plan (the tasks), its
//! report schema, its text, its methods paragraph and its figures.
//!
//! Every analysis offers its faces the same shape ([`Analysis`]): a checked plan lists independent tasks, any task
//! runs anywhere and in any order from its own random stream, and `finish` turns the outcomes, in any order, into
//! the result. A face only decides where tasks run (rayon threads, a pool of Web Workers), so the numbers never
//! depend on it.

pub mod across;
pub mod continuous;
pub mod neurons;
pub mod over_time;
pub mod power;
pub mod study;
pub mod time_course;
pub mod trial_table;

use crate::data::trials::Trials;
use crate::decoders;
use crate::error::{Error, Result};
use crate::recipe::Recipe;
use crate::resample::{Scheme, Split};
use serde::de::DeserializeOwned;
use serde::Serialize;

/// An analysis checked against its data, ready to hand out tasks.
pub trait Analysis: Sync {
    /// One independent piece of work, addressed by its kind and index.
    type Task: Copy + Send + Sync + Serialize + DeserializeOwned;
    /// What a task produced; faces may carry it as JSON (the page's workers, part files).
    type Outcome: Send + Serialize + DeserializeOwned;

    /// Every task, in a fixed order.
    fn tasks(&self) -> Vec<Self::Task>;
    /// Fits one task performs, for progress bars and estimates.
    fn fits_in(&self, task: Self::Task) -> usize;
    /// Run one task; depends only on the plan and the task.
    fn run(&self, task: Self::Task) -> Self::Outcome;
    /// The recipe as the analysis runs it (what `--save-recipe` and the page's recipe export write).
    fn recipe(&self) -> &Recipe;
    /// What a face shows before running: classes, counts, warnings (JSON).
    fn overview(&self) -> serde_json::Value;
    /// The result from every task's outcome, in any order.
    fn finish(&self, outcomes: &[Self::Outcome]) -> Finished;
}

/// A finished analysis as every face writes it.
pub struct Finished {
    /// The result JSON (the analysis's schema); byte-identical on every face.
    pub json: String,
    /// The one sentence a reader needs first, when the analysis has one.
    pub headline: Option<String>,
    /// The text summary the CLI prints.
    pub text: String,
    /// The methods paragraph, when the analysis has one.
    pub methods: Option<String>,
    /// Figures (SVG) and tables (CSV), by file name.
    pub files: Vec<(&'static str, String)>,
}

/// The recipe's resampling scheme resolved against the trials, with the decoder's own cautions (a kernel too large
/// for a browser tab) ahead of the scheme's.
pub fn resolve_scheme(trials: &Trials, recipe: &Recipe) -> Result<Scheme> {
    decoders::require_classes(recipe.classifier)?;
    if let Some(a) = &recipe.across {
        return Err(Error::Recipe(format!(
            "this recipe trains and tests across levels of '{}': it is an analysis of generalization across \
             conditions",
            a.column
        )));
    }
    let mut scheme = Scheme::resolve(trials, recipe)?;
    if !matches!(scheme.split, Split::Pseudo { .. }) {
        if let Some(w) = decoders::memory_warning(recipe.classifier, scheme.trials_per_repeat) {
            scheme.warnings.insert(0, w);
        }
    }
    Ok(scheme)
}
