//! Generalization across conditions: is the population's code for one variable shared across the levels of
//! another? A decoder of the label (a choice) is trained on the trials at some levels of a second column (a
//! context) and tested on the trials at others, for every assignment asked for or every balanced dichotomy of the
//! levels (the cross-condition generalization performance of Bernardi et al., 2020), beside the within-condition
//! score cross-validated inside the testing levels, with a null from labels permuted within each level ([`plan`]).
//! Trial tables and recordings (every window, and train × test time when asked) alike; [`report`] has the two
//! schemas, [`text`], [`methods`] and [`plots`] show them.

pub mod methods;
pub mod plan;
pub mod plots;
pub mod report;
pub mod text;

pub use plan::{AcrossOutcome, AcrossPlan};
pub use report::{AcrossReport, AcrossTimeReport};

use super::{Analysis, Finished};
use crate::recipe::Recipe;
use crate::resample::Task;

impl Analysis for AcrossPlan {
    type Task = Task;
    type Outcome = AcrossOutcome;

    fn tasks(&self) -> Vec<Task> {
        AcrossPlan::tasks(self)
    }

    fn fits_in(&self, task: Task) -> usize {
        AcrossPlan::fits_in(self, task)
    }

    fn run(&self, task: Task) -> AcrossOutcome {
        AcrossPlan::run(self, task)
    }

    fn recipe(&self) -> &Recipe {
        &self.recipe
    }

    fn overview(&self) -> serde_json::Value {
        let f = &self.data.features;
        let assignments: Vec<serde_json::Value> = self
            .assignments
            .iter()
            .map(|a| {
                let names = |s: &[usize]| {
                    s.iter()
                        .map(|&l| self.data.level_names[l].clone())
                        .collect::<Vec<_>>()
                };
                serde_json::json!({
                    "train": names(&a.train),
                    "test": names(&a.test),
                    "train_trials": a.train_size,
                    "test_trials": a.test_size,
                })
            })
            .collect();
        serde_json::json!({
            "classes": self.data.classes,
            "class_counts": self.data.class_counts(),
            "levels": self.data.level_names,
            "cell_counts": self.data.cell_counts(),
            "assignments": assignments,
            "features": f.n_features(),
            "trials": f.n_trials,
            "windows": f.windows,
            "warnings": self.warnings,
        })
    }

    fn finish(&self, outcomes: &[AcrossOutcome]) -> Finished {
        if self.data.features.is_time() {
            let r = AcrossTimeReport::build(self, outcomes);
            let files = [
                ("curve.svg", Some(plots::time_curve(&r))),
                ("curve.csv", Some(text::curve_csv(&r))),
                ("generalization.svg", plots::time_matrix(&r)),
                ("generalization.csv", text::generalization_csv(&r)),
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
            let r = AcrossReport::build(self, outcomes);
            let files = [
                ("assignments.svg", Some(plots::assignments(&r))),
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
pub fn run_all(plan: &AcrossPlan) -> AcrossReport {
    let outcomes: Vec<AcrossOutcome> = plan.tasks().into_iter().map(|t| plan.run(t)).collect();
    AcrossReport::build(plan, &outcomes)
}

/// Run every task one after the other and build the recording's report.
pub fn run_all_time(plan: &AcrossPlan) -> AcrossTimeReport {
    let outcomes: Vec<AcrossOutcome> = plan.tasks().into_iter().map(|t| plan.run(t)).collect();
    AcrossTimeReport::build(plan, &outcomes)
}
