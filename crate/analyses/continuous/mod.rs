//! Decoding a continuous or circular variable (running speed, position, heading) from a trial table or at every
//! window of a recording.
//!
//! The protocol is the classification protocol's with what changes for a number ([`plan`]): random k-fold (grouped
//! when asked; nothing to balance), ridge regression fitted inside each training fold with its penalty chosen by
//! nested cross-validation ([`crate::decoders::ridge`]), scores pooled over folds per repeat (out-of-sample R²
//! against the training mean and Pearson's r; for an angle, decoded as its cosine and sine, the mean absolute
//! angular error and the circular correlation), and a null from permuting the values across trials. Over time, the
//! same folds serve every window and a cluster test finds the spans decoded better than the shuffles. [`report`]
//! has the two schemas; [`text`], [`methods`] and [`plots`] show them.

pub mod methods;
pub mod plan;
pub mod plots;
pub mod report;
pub mod text;

pub use plan::{ContinuousOutcome, ContinuousPlan};
pub use report::{ContinuousReport, ContinuousTimeReport};

use super::{Analysis, Finished};
use crate::recipe::Recipe;
use crate::resample::Task;

impl Analysis for ContinuousPlan {
    type Task = Task;
    type Outcome = ContinuousOutcome;

    fn tasks(&self) -> Vec<Task> {
        ContinuousPlan::tasks(self)
    }

    fn fits_in(&self, task: Task) -> usize {
        ContinuousPlan::fits_in(self, task)
    }

    fn run(&self, task: Task) -> ContinuousOutcome {
        ContinuousPlan::run(self, task)
    }

    fn recipe(&self) -> &Recipe {
        &self.recipe
    }

    fn overview(&self) -> serde_json::Value {
        let f = &self.data.features;
        serde_json::json!({
            "target": self.data.column,
            "variable": if self.higher_is_better() { "linear" } else { "circular" },
            "trials": f.n_trials,
            "features": f.n_features(),
            "windows": f.windows,
            "folds": self.folds(),
            "warnings": self.warnings,
        })
    }

    fn finish(&self, outcomes: &[ContinuousOutcome]) -> Finished {
        if self.data.features.is_time() {
            let r = ContinuousTimeReport::build(self, outcomes);
            let at = r.predictions.time.map_or(String::new(), |t| {
                format!(", best window ({} s)", crate::report::text::seconds(t))
            });
            let files = [
                ("curve.svg", Some(plots::time_curve(&r))),
                ("curve.csv", Some(text::curve_csv(&r))),
                (
                    "predicted.svg",
                    plots::predicted_vs_actual(&r.target, &r.predictions, &at),
                ),
                (
                    "predictions.csv",
                    Some(text::predictions_csv(&r.predictions)),
                ),
            ];
            Finished {
                json: r.to_json(),
                headline: Some(text::time_headline(&r)),
                text: text::time_render(&r),
                methods: Some(methods::time_paragraph(&r)),
                files: files
                    .into_iter()
                    .filter_map(|(n, c)| c.map(|c| (n, c)))
                    .collect(),
            }
        } else {
            let r = ContinuousReport::build(self, outcomes);
            let files = [
                (
                    "predicted.svg",
                    plots::predicted_vs_actual(&r.target, &r.predictions, ""),
                ),
                (
                    "predictions.csv",
                    Some(text::predictions_csv(&r.predictions)),
                ),
                ("scores.svg", Some(plots::score_distribution(&r))),
                ("null.svg", plots::null_distribution(&r)),
            ];
            Finished {
                json: r.to_json(),
                headline: Some(text::headline_sentence(&r)),
                text: text::render(&r),
                methods: Some(methods::paragraph(&r)),
                files: files
                    .into_iter()
                    .filter_map(|(n, c)| c.map(|c| (n, c)))
                    .collect(),
            }
        }
    }
}

/// Run every task one after the other and build the trial-table report (tests, examples).
pub fn run_all(plan: &ContinuousPlan) -> ContinuousReport {
    let outcomes: Vec<ContinuousOutcome> = plan.tasks().into_iter().map(|t| plan.run(t)).collect();
    ContinuousReport::build(plan, &outcomes)
}

/// Run every task one after the other and build the recording's report.
pub fn run_all_time(plan: &ContinuousPlan) -> ContinuousTimeReport {
    let outcomes: Vec<ContinuousOutcome> = plan.tasks().into_iter().map(|t| plan.run(t)).collect();
    ContinuousTimeReport::build(plan, &outcomes)
}
