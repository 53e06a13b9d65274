//! What each neuron contributes: decoding from random subsets of growing size (the neuron-dropping curve), from
//! each neuron alone, and, for linear decoders, the weights and the activation patterns of the decoder.
//!
//! Every subset and every single neuron runs the full protocol (balancing, folds, train-fold standardisation) with
//! the recipe's repeats and no shuffles. Repeat i draws the same balancing and folds for every subset (the streams
//! depend on the repeat only), so differences between subsets are differences between neurons, not between splits.
//! Subset draw d of size s comes from its own stream (seed, subset, s, d).
//!
//! Weights say how the decoder combines neurons, and a neuron that carries no information can get a large weight
//! when it helps cancel noise shared with informative neurons; the activation pattern of an output,
//! `a = Σₓ w / Var(wᵀx)` (Haufe et al., 2014, for one output at a time), is the covariance between each neuron and
//! the decoder's output, and is the one that may be read as "what the neuron carries".

pub mod plan;
pub mod plots;
pub mod report;
pub mod text;

pub use plan::{sizes, subset, MeanSd, NeuronOutcome, NeuronTask, NeuronsPlan};

use super::{Analysis, Finished};
use crate::recipe::Recipe;
use report::NeuronsReport;

// The plan's own methods do the work (`NeuronsPlan::tasks` and the others resolve to them, not to this impl), so
// that the plan knows nothing of the report built from it.
impl Analysis for NeuronsPlan {
    type Task = NeuronTask;
    type Outcome = NeuronOutcome;

    fn tasks(&self) -> Vec<NeuronTask> {
        NeuronsPlan::tasks(self)
    }

    fn fits_in(&self, task: NeuronTask) -> usize {
        NeuronsPlan::fits_in(self, task)
    }

    fn run(&self, task: NeuronTask) -> NeuronOutcome {
        NeuronsPlan::run(self, task)
    }

    fn recipe(&self) -> &Recipe {
        &self.recipe
    }

    fn overview(&self) -> serde_json::Value {
        serde_json::json!({ "sizes": self.sizes })
    }

    fn finish(&self, outcomes: &[NeuronOutcome]) -> Finished {
        let report = NeuronsReport::build(self, outcomes);
        Finished {
            json: report.to_json(),
            headline: None,
            text: text::render(&report),
            methods: None,
            files: [
                ("dropping.svg", Some(plots::dropping(&report))),
                ("single.svg", Some(plots::single(&report))),
                ("weights.svg", plots::weights(&report)),
            ]
            .into_iter()
            .filter_map(|(name, contents)| contents.map(|c| (name, c)))
            .collect(),
        }
    }
}

/// Run every task one after the other.
pub fn run_all(plan: &NeuronsPlan) -> NeuronsReport {
    let outcomes: Vec<NeuronOutcome> = plan.tasks().into_iter().map(|t| plan.run(t)).collect();
    NeuronsReport::build(plan, &outcomes)
}
