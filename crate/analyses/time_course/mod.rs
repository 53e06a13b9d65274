//! Time-resolved decoding: when does the population carry the information?
//!
//! A recording ([`crate::data::time::TimeDataset`], from a binned table, spike events or an NWB file counted in
//! sliding windows) is decoded at every window with the same protocol as a trial table ([`plan`]): the same balancing,
//! folds, train-fold standardisation and repeats, drawn once per repeat and shared by every window. Label shuffles
//! give a null at every window, and a cluster-based permutation test ([`crate::stats::clusters`]) says which spans of the curve
//! (and, with temporal generalization, which regions of the train × test matrix) hold information while
//! controlling the error over all windows at once. [`report`] assembles the result; [`text`], [`methods`] and
//! [`plots`] show it.

pub mod methods;
pub mod plan;
pub mod plots;
pub mod pooled;
pub mod report;
pub mod text;

pub use plan::{TimeOutcome, TimePlan};
pub use report::{run_all, TimeReport};

use super::{Analysis, Finished};
use crate::recipe::Recipe;
use crate::resample::Task;

// The plan's own methods do the work (`TimePlan::tasks` and the others resolve to them, not to this impl), so that
// the plan knows nothing of the report built from it.
impl Analysis for TimePlan {
    type Task = Task;
    type Outcome = TimeOutcome;

    fn tasks(&self) -> Vec<Task> {
        TimePlan::tasks(self)
    }

    fn fits_in(&self, task: Task) -> usize {
        TimePlan::fits_in(self, task)
    }

    fn run(&self, task: Task) -> TimeOutcome {
        TimePlan::run(self, task)
    }

    fn recipe(&self) -> &Recipe {
        &self.recipe
    }

    fn overview(&self) -> serde_json::Value {
        let data = &self.data;
        serde_json::json!({
            "classes": data.classes,
            "class_counts": data.class_counts(),
            "features": data.n_neurons(),
            "trials": data.n_trials(),
            "windows": data.windows,
            "spikes_total": data.spikes_total,
            "spikes_outside": data.spikes_outside,
            "trials_per_repeat": self.scheme.trials_per_repeat,
            "warnings": self.scheme.warnings,
        })
    }

    fn finish(&self, outcomes: &[TimeOutcome]) -> Finished {
        let report = report::TimeReport::build(self, outcomes);
        Finished {
            json: report.to_json(),
            headline: Some(text::headline_sentence(&report)),
            text: text::render(&report),
            methods: Some(methods::paragraph(&report)),
            files: [
                ("curve.svg", Some(plots::curve(&report))),
                ("curve.csv", Some(text::curve_csv(&report))),
                ("generalization.svg", plots::generalization(&report)),
                ("generalization.csv", text::generalization_csv(&report)),
            ]
            .into_iter()
            .filter_map(|(name, contents)| contents.map(|c| (name, c)))
            .collect(),
        }
    }
}
