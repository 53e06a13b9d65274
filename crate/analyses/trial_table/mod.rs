//! The trial-table analysis: cross-validated decoding of one row per trial, cut into independent tasks.
//!
//! A [`Plan`] checks a dataset against a recipe once, then lists its [`Task`]s: each observed repeat and each
//! shuffle is one task. Running a task needs only the plan and the task's index: it builds its own random stream, so
//! the CLI can spread tasks over threads and the page over workers, in any order, and the numbers stay the same.
//! [`report::Report::build`] then assembles the outcomes, in task order, into the result.
//!
//! One repeat: (1) balance classes by undersampling, (2) split into stratified or grouped folds (or, for neurons
//! recorded in separate sessions, build pseudo-trials within folds: [`crate::resample::pseudo`]), (3)-(4) for each
//! fold fit standardisation and decoder on the training trials only and predict the test trials, (5) pool the test
//! predictions of all folds into one confusion matrix, accuracy and balanced accuracy.

pub mod methods;
pub mod plan;
pub mod plots;
pub mod predict;
pub mod report;
pub mod text;

pub use plan::{Outcome, Plan, TableTask};

use super::{Analysis, Finished};
use crate::recipe::Recipe;

// The plan's own methods do the work (`Plan::tasks` and the others resolve to them, not to this impl), so that the
// plan knows nothing of the report built from it.
impl Analysis for Plan {
    type Task = TableTask;
    type Outcome = Outcome;

    fn tasks(&self) -> Vec<TableTask> {
        Plan::tasks(self)
    }

    fn fits_in(&self, task: TableTask) -> usize {
        Plan::fits_in(self, task)
    }

    fn run(&self, task: TableTask) -> Outcome {
        Plan::run(self, task)
    }

    fn recipe(&self) -> &Recipe {
        &self.recipe
    }

    fn overview(&self) -> serde_json::Value {
        serde_json::json!({
            "classes": self.data.classes,
            "class_counts": self.data.class_counts(),
            "features": self.data.n_features(),
            "trials": self.data.n_trials(),
            "trials_per_repeat": self.scheme.trials_per_repeat,
            "warnings": self.scheme.warnings,
        })
    }

    fn finish(&self, outcomes: &[Outcome]) -> Finished {
        let report = report::Report::build(self, outcomes);
        Finished {
            json: report.to_json(),
            headline: Some(text::headline_sentence(&report)),
            text: text::render(&report),
            methods: Some(methods::paragraph(&report)),
            files: [
                ("scores.svg", Some(plots::score_distribution(&report))),
                ("confusion.svg", Some(plots::confusion(&report))),
                ("null.svg", plots::null_distribution(&report)),
                ("pairwise.svg", plots::pairwise(&report)),
            ]
            .into_iter()
            .filter_map(|(name, contents)| contents.map(|c| (name, c)))
            .collect(),
        }
    }
}

/// Run every task of a plan one after the other (for faces with no parallelism, tests and examples).
pub fn run_all(plan: &Plan) -> report::Report {
    let outcomes: Vec<Outcome> = plan.tasks().into_iter().map(|t| plan.run(t)).collect();
    report::Report::build(plan, &outcomes)
}
