//! Studies: many sessions (and animals) in one analysis, with group-level statistics.
//!
//! A study table lists the sessions ([`crate::input::study`]); one recipe serves them all. Two ways to combine:
//!
//! 1. **Each session decoded on its own** ([`plan`]): every session runs the trial-table or time-course protocol
//!    with its own label-shuffle null and its own seed; the tasks are session × repeat or shuffle, so progress
//!    counts sessions and fits and any face can spread them. The group statistics ([`crate::stats::group`]) then
//!    combine the sessions' observed scores and null scores: the group mean with its spread, its permutation test
//!    (Stelzer, Chen & Turner 2013), prevalence inference (Allefeld, Görgen & Haynes 2016), a t-test shown only
//!    with its caution, and over time the group curve's cluster test on the same draws.
//! 2. **Pooled** (`pool`): every session's neurons joined into one pseudo-population, as a trial table with
//!    pseudo-trials ([`crate::resample::pseudo`]) or a time course of pooled sessions
//!    ([`crate::analyses::time_course::pooled`]); the pooled population's own report is embedded, with its caveat.
//!
//! Sessions that cannot enter as set up (other label values, other time bins, too few trials for the folds) are
//! listed with the reason and left out only when the user agrees.

pub mod methods;
pub mod plan;
pub mod plots;
pub mod report;
pub mod text;

pub use plan::{
    assess_files, from_files, StudyOptions, StudyOutcome, StudyPlan, StudyRequest, StudyTask,
};
pub use report::StudyReport;

use super::{Analysis, Finished};
use crate::recipe::Recipe;

impl Analysis for StudyPlan {
    type Task = StudyTask;
    type Outcome = StudyOutcome;

    fn tasks(&self) -> Vec<StudyTask> {
        StudyPlan::tasks(self)
    }

    fn fits_in(&self, task: StudyTask) -> usize {
        StudyPlan::fits_in(self, task)
    }

    fn run(&self, task: StudyTask) -> StudyOutcome {
        StudyPlan::run(self, task)
    }

    fn recipe(&self) -> &Recipe {
        &self.recipe
    }

    /// The sessions as the faces list them before running: who they are, their data, their class counts and the
    /// sessions left out with the reason.
    fn overview(&self) -> serde_json::Value {
        let sessions: Vec<serde_json::Value> =
            self.sessions.iter().map(plan::Session::listing).collect();
        serde_json::json!({
            "classes": self.classes,
            "kind": self.kind,
            "pool": self.options.pool,
            "sessions": sessions,
            "left_out": self.left_out,
            "level": if self.by_subject() { "subject" } else { "session" },
            "units": self.unit_names,
            "warnings": self.warnings,
        })
    }

    fn finish(&self, outcomes: &[StudyOutcome]) -> Finished {
        let pooled = self
            .pooled
            .as_ref()
            .map(|p| report::pooled_finished(p, outcomes));
        let r = StudyReport::build(self, outcomes, pooled.as_ref());
        let sessions_csv = ("sessions.csv", text::sessions_csv(&r));
        match pooled {
            Some(p) => {
                let mut files = p.files;
                files.push(sessions_csv);
                Finished {
                    json: r.to_json(),
                    headline: Some(text::headline_sentence(&r)),
                    text: format!(
                        "{}\n\npooled population ({}):\n{}",
                        text::headline_sentence(&r),
                        report::POOLED_NOTE,
                        p.text
                    ),
                    methods: p.methods.map(|m| {
                        format!(
                            "The neurons of the {} sessions listed in {} (SHA-256 {}) were pooled into one \
                             pseudo-population and decoded as follows; {}. {m}",
                            r.sessions.len(),
                            r.study.file,
                            r.study.sha256,
                            report::POOLED_NOTE
                        )
                    }),
                    files,
                }
            }
            None => Finished {
                json: r.to_json(),
                headline: Some(text::headline_sentence(&r)),
                text: text::render(&r),
                methods: Some(methods::paragraph(&r)),
                files: [
                    ("sessions.svg", plots::sessions(&r)),
                    ("sessions.csv", Some(sessions_csv.1)),
                    ("group_curve.svg", plots::group_curve(&r)),
                    ("group_curve.csv", text::group_curve_csv(&r)),
                ]
                .into_iter()
                .filter_map(|(name, contents)| contents.map(|c| (name, c)))
                .collect(),
            },
        }
    }
}

/// Run every task one after the other (tests, examples, faces without parallelism).
pub fn run_all(plan: &StudyPlan) -> Finished {
    let outcomes: Vec<StudyOutcome> = plan.tasks().into_iter().map(|t| plan.run(t)).collect();
    plan.finish(&outcomes)
}
