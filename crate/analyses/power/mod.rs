//! Planning the next recording: how decoding and its significance would change with fewer trials, fewer neurons,
//! or more uninformative neurons, measured by subsampling the recording itself.
//!
//! * **Trials.** At each size of a grid of trials per class, many subsamples keep that many real trials of every
//!   class, drawn without replacement, each from its own random stream (seed, power trials, size, draw).
//! * **Neurons.** At each size of a grid of neuron counts, random subsets of the recorded neurons, the same subsets
//!   the neuron-dropping curve draws ([`crate::analyses::neurons::subset`]), with every trial.
//! * **Noise neurons.** At each count of a grid, the recording with that many noise neurons appended, each a
//!   recorded neuron's values permuted across trials ([`plan::PowerPlan::with_noise`]), with every trial.
//!
//! Every subsample, subset or noise draw is one task and runs the recipe's whole protocol (balancing, folds,
//! train-fold standardisation, repeats and a shuffle control) from a seed of its own, through the trial-table
//! plan: so its score and p-value are exactly what `decode` would report on that data with that seed. The
//! empirical power at a grid point is the fraction of its subsamples with p ≤ α.
//!
//! Beyond the recorded trials nothing is measured: an inverse power-law learning curve fitted to the measured
//! trials points ([`crate::stats::learning_curve`]) is reported apart from them (`extrapolation`), with its
//! interval, and drawn dashed.

pub mod methods;
pub mod plan;
pub mod plots;
pub mod report;
pub mod text;

pub use plan::{PowerOutcome, PowerPlan, PowerTask};

use super::{Analysis, Finished};
use crate::recipe::Recipe;
use report::PowerReport;

// The plan's own methods do the work (`PowerPlan::tasks` and the others resolve to them, not to this impl), so
// that the plan knows nothing of the report built from it.
impl Analysis for PowerPlan {
    type Task = PowerTask;
    type Outcome = PowerOutcome;

    fn tasks(&self) -> Vec<PowerTask> {
        PowerPlan::tasks(self)
    }

    fn fits_in(&self, task: PowerTask) -> usize {
        PowerPlan::fits_in(self, task)
    }

    fn run(&self, task: PowerTask) -> PowerOutcome {
        PowerPlan::run(self, task)
    }

    fn recipe(&self) -> &Recipe {
        &self.recipe
    }

    fn overview(&self) -> serde_json::Value {
        let tasks = self.tasks();
        let fits: u64 = tasks.iter().map(|&t| self.fits_in(t) as u64).sum();
        serde_json::json!({
            "classes": self.plan.data.classes,
            "class_counts": self.plan.data.class_counts(),
            "features": self.plan.data.n_features(),
            "trials": self.plan.data.n_trials(),
            "grids": self.grids,
            "total_fits": fits,
            "warnings": self.plan.scheme.warnings,
        })
    }

    fn finish(&self, outcomes: &[PowerOutcome]) -> Finished {
        let report = PowerReport::build(self, outcomes);
        Finished {
            json: report.to_json(),
            headline: Some(text::headline_sentence(&report)),
            text: text::render(&report),
            methods: Some(methods::paragraph(&report)),
            files: vec![
                ("trials.svg", plots::trials(&report)),
                ("neurons.svg", plots::neurons(&report)),
                ("noise.svg", plots::noise(&report)),
                ("power.csv", plots::table(&report)),
            ],
        }
    }
}

/// Run every task one after the other (tests and examples).
pub fn run_all(plan: &PowerPlan) -> PowerReport {
    let outcomes: Vec<PowerOutcome> = plan.tasks().into_iter().map(|t| plan.run(t)).collect();
    PowerReport::build(plan, &outcomes)
}
