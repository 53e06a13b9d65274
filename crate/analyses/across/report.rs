//! The result of generalization across conditions.
//!
//! Schema `popdecode-across/1` (a trial table; fields are only ever added):
//! * `schema`, `software`, `recipe`, `classes`, `class_counts`, `fits`, `warnings`, `tuning`: as in
//!   `popdecode-result/1`
//! * `input` {`kind`, `files` [{`file`, `sha256`}], `trials`, `features`, `label_column`, `group_column`, `groups`,
//!   `across_column`, `dropped_lines`, `skipped_columns`, `spikes_total`, `spikes_outside`}
//! * `levels` (of the across column, sorted), `cell_counts` (trials per `[level][class]`)
//! * `design` {`headline` ("accuracy", or "balanced_accuracy" without balancing), `assignments` ("named" or
//!   "balanced_dichotomies"), `balance`}
//! * `chance` {`level`}
//! * `assignments`: per assignment {`index`, `train`, `test` (level names), `balance` {`train_per_cell`,
//!   `test_per_cell` (trials kept per level × class cell; null without balancing), `train_trials`, `test_trials`
//!   (per repeat)}, `within_split`, `within_folds`, `accuracy`, `balanced_accuracy` (generalization: trained on
//!   `train`, tested on `test`; each {`mean`, `sd`, `p2_5`, `p97_5`} over repeats), `within` {`accuracy`,
//!   `balanced_accuracy`} (cross-validated within the testing levels), `chance_threshold` (binomial, α = 0.05, for
//!   `test_trials`), `null_mean`, `null_p95`, `p_value` (this assignment's own permutation test)}
//! * `repeats`: per observed repeat {`index`, `accuracy`, `balanced_accuracy`, `within_accuracy`,
//!   `within_balanced_accuracy`}, each the mean over assignments
//! * `summary` {`accuracy`, `balanced_accuracy`}: the generalization score, mean over assignments (with balanced
//!   dichotomies, the cross-condition generalization performance of Bernardi et al., 2020), spread over repeats
//! * `within` {`accuracy`, `balanced_accuracy`}: the within-condition score beside it, the same way
//! * `shuffle` {`count`, `repeats_each`, `permuted_within` (what labels were permuted within), `observed`, `null`
//!   (per shuffle, the headline mean over assignments), `null_mean`, `null_sd`, `null_p95`, `p_value`}
//! * `first_repeat`: per assignment {`assignment`, `train`, `test` (trial indices, file order after any left out),
//!   `predicted` (class index per testing trial), `within_fold`, `within_predicted`}: every decision of observed
//!   repeat 0, for checking against another implementation
//!
//! Schema `popdecode-across-timecourse/1` (a recording): `input`, `levels`, `cell_counts`, `design`, `chance`,
//! `fits`, `warnings`, `tuning` as above, and
//! * `assignments`: per assignment {`index`, `train`, `test`, `balance`, `within_split`, `within_folds`, `curve`
//!   (headline mean per window), `within_curve`}
//! * `windows`: per window {`index`, `start`, `end`, `time`, `accuracy`, `balanced_accuracy`, `within_accuracy`,
//!   `within_balanced_accuracy` (means over assignments, spread over repeats), `null_mean`, `null_p95`,
//!   `significant`}
//! * `repeats`: per observed repeat {`index`, `accuracy`, `balanced_accuracy`, `within_accuracy`,
//!   `within_balanced_accuracy`}, one value per window
//! * `shuffle` {`count`, `repeats_each`, `permuted_within`, `cluster_percentile`, `null`, `null_max_mass`}
//! * `clusters`, `onset`, `generalization`: as in `popdecode-timecourse/1`, on the mean over assignments

use super::plan::{AcrossOutcome, AcrossPlan, Decisions, WithinSplit};
use crate::analyses::over_time::{curve_test, in_significant, onset, time_clusters};
use crate::analyses::time_course::report::{
    generalization_caveat, Generalization, GridCluster, Onset, TimeCluster,
};
use crate::data::SourceFile;
use crate::recipe::{Recipe, TimeInput};
use crate::report::{by_task, Fits, Software, Tuning, CHANCE_ALPHA};
use crate::resample::Headline;
use crate::stats::clusters::{self, CLUSTER_PERCENTILE};
use crate::stats::{self, binomial, Spread};
use serde::{Deserialize, Serialize};

pub const ACROSS_SCHEMA: &str = "popdecode-across/1";
pub const ACROSS_TIME_SCHEMA: &str = "popdecode-across-timecourse/1";

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AcrossReport {
    pub schema: String,
    pub software: Software,
    pub input: AcrossInput,
    pub recipe: Recipe,
    pub classes: Vec<String>,
    pub class_counts: Vec<usize>,
    pub levels: Vec<String>,
    pub cell_counts: Vec<Vec<usize>>,
    pub design: AcrossDesign,
    pub chance: ChanceLevel,
    pub assignments: Vec<AssignmentResult>,
    pub repeats: Vec<AcrossRepeat>,
    pub summary: Scores,
    pub within: Scores,
    pub shuffle: AcrossShuffle,
    pub first_repeat: Vec<AssignmentDecisions>,
    pub fits: Fits,
    pub warnings: Vec<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tuning: Option<Tuning>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AcrossTimeReport {
    pub schema: String,
    pub software: Software,
    pub input: AcrossInput,
    pub recipe: Recipe,
    pub classes: Vec<String>,
    pub class_counts: Vec<usize>,
    pub levels: Vec<String>,
    pub cell_counts: Vec<Vec<usize>>,
    pub design: AcrossDesign,
    pub chance: ChanceLevel,
    pub assignments: Vec<AssignmentCurve>,
    pub windows: Vec<AcrossWindow>,
    pub repeats: Vec<AcrossRepeatCurves>,
    pub shuffle: AcrossCurveShuffle,
    pub clusters: Vec<TimeCluster>,
    pub onset: Option<Onset>,
    pub generalization: Option<Generalization>,
    pub fits: Fits,
    pub warnings: Vec<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tuning: Option<Tuning>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AcrossInput {
    pub kind: String,
    pub files: Vec<SourceFile>,
    pub trials: usize,
    pub features: Vec<String>,
    pub label_column: String,
    pub group_column: Option<String>,
    pub groups: Vec<String>,
    pub across_column: String,
    pub dropped_lines: Vec<u64>,
    pub skipped_columns: Vec<String>,
    pub spikes_total: u64,
    pub spikes_outside: u64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AcrossDesign {
    pub headline: Headline,
    pub assignments: String,
    pub balance: bool,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ChanceLevel {
    pub level: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SetBalance {
    pub train_per_cell: Option<usize>,
    pub test_per_cell: Option<usize>,
    pub train_trials: usize,
    pub test_trials: usize,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Scores {
    pub accuracy: Spread,
    pub balanced_accuracy: Spread,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AssignmentResult {
    pub index: usize,
    pub train: Vec<String>,
    pub test: Vec<String>,
    pub balance: SetBalance,
    pub within_split: WithinSplit,
    pub within_folds: usize,
    pub accuracy: Spread,
    pub balanced_accuracy: Spread,
    pub within: Scores,
    pub chance_threshold: f64,
    pub null_mean: Option<f64>,
    pub null_p95: Option<f64>,
    pub p_value: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AcrossRepeat {
    pub index: usize,
    pub accuracy: f64,
    pub balanced_accuracy: f64,
    pub within_accuracy: f64,
    pub within_balanced_accuracy: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AcrossShuffle {
    pub count: usize,
    pub repeats_each: usize,
    pub permuted_within: String,
    pub observed: f64,
    pub null: Vec<f64>,
    pub null_mean: Option<f64>,
    pub null_sd: Option<f64>,
    pub null_p95: Option<f64>,
    pub p_value: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AssignmentDecisions {
    pub assignment: usize,
    #[serde(flatten)]
    pub decisions: Decisions,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AssignmentCurve {
    pub index: usize,
    pub train: Vec<String>,
    pub test: Vec<String>,
    pub balance: SetBalance,
    pub within_split: WithinSplit,
    pub within_folds: usize,
    pub curve: Vec<f64>,
    pub within_curve: Vec<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AcrossWindow {
    pub index: usize,
    pub start: f64,
    pub end: f64,
    pub time: f64,
    pub accuracy: Spread,
    pub balanced_accuracy: Spread,
    pub within_accuracy: Spread,
    pub within_balanced_accuracy: Spread,
    pub null_mean: Option<f64>,
    pub null_p95: Option<f64>,
    pub significant: bool,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AcrossRepeatCurves {
    pub index: usize,
    pub accuracy: Vec<f64>,
    pub balanced_accuracy: Vec<f64>,
    pub within_accuracy: Vec<f64>,
    pub within_balanced_accuracy: Vec<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AcrossCurveShuffle {
    pub count: usize,
    pub repeats_each: usize,
    pub permuted_within: String,
    pub cluster_percentile: f64,
    pub null: Vec<Vec<f64>>,
    pub null_max_mass: Vec<f64>,
}

/// Mean over assignments of `f(outcome)[assignment][window]` at each window.
fn over_assignments(o: &[Vec<f64>]) -> Vec<f64> {
    let nw = o.first().map_or(0, Vec::len);
    (0..nw)
        .map(|w| stats::mean(&o.iter().map(|a| a[w]).collect::<Vec<_>>()))
        .collect()
}

/// What both schemas share.
struct Common {
    input: AcrossInput,
    design: AcrossDesign,
    fits: Fits,
    warnings: Vec<String>,
    tuning: Option<Tuning>,
    permuted_within: String,
}

fn common(plan: &AcrossPlan, outcomes: &[AcrossOutcome], repeats: &[&AcrossOutcome]) -> Common {
    let f = &plan.data.features;
    let kind = match plan.recipe.time.as_ref().map(|t| &t.input) {
        None => "table",
        Some(TimeInput::Binned { .. }) => "binned",
        Some(TimeInput::Events { .. }) => "events",
        Some(TimeInput::Nwb { .. }) => "nwb",
    };
    let fits = Fits::sum(
        outcomes
            .iter()
            .map(|o| (o.fits, o.capped_fits, o.single_class_fits)),
    );
    let mut warnings = fits.with_warnings(&plan.warnings);
    let m = plan.recipe.shuffles;
    if m > 0 && m < 100 {
        warnings.push(format!(
            "only {m} shuffles: p-values cannot go below {}; 200 or more are usual",
            crate::report::text::floor_words(m)
        ));
    }
    Common {
        input: AcrossInput {
            kind: kind.into(),
            files: f.files.clone(),
            trials: f.n_trials,
            features: f.names.clone(),
            label_column: plan.data.label_column.clone(),
            group_column: f.group_column.clone(),
            groups: f.group_names.clone(),
            across_column: plan.data.across_column.clone(),
            dropped_lines: f.dropped_lines.clone(),
            skipped_columns: f.skipped_columns.clone(),
            spikes_total: f.spikes_total,
            spikes_outside: f.spikes_outside,
        },
        design: AcrossDesign {
            headline: plan.headline,
            assignments: if plan.dichotomies {
                "balanced_dichotomies"
            } else {
                "named"
            }
            .into(),
            balance: plan.recipe.balance,
        },
        fits,
        warnings,
        tuning: Tuning::of(&plan.recipe, repeats.iter().flat_map(|o| &o.chosen)),
        permuted_within: match &f.group_column {
            Some(g) => format!("levels of '{}' and of '{g}'", plan.data.across_column),
            None => format!("levels of '{}'", plan.data.across_column),
        },
    }
}

fn balance_of(plan: &AcrossPlan, a: usize) -> SetBalance {
    let r = &plan.assignments[a];
    SetBalance {
        train_per_cell: plan.recipe.balance.then_some(r.train_per_cell),
        test_per_cell: plan.recipe.balance.then_some(r.test_per_cell),
        train_trials: r.train_size,
        test_trials: r.test_size,
    }
}

fn names(plan: &AcrossPlan, levels: &[usize]) -> Vec<String> {
    levels
        .iter()
        .map(|&l| plan.data.level_names[l].clone())
        .collect()
}

impl AcrossReport {
    /// Assemble a trial table's result from every task's outcome (any order).
    pub fn build(plan: &AcrossPlan, outcomes: &[AcrossOutcome]) -> AcrossReport {
        let (repeats, shuffles) = by_task(outcomes, |o| o.task);
        let c = common(plan, outcomes, &repeats);
        let k = plan.data.classes.len();
        let head = |o: &AcrossOutcome, a: usize| {
            plan.headline_of(o.accuracy[a][0], o.balanced_accuracy[a][0])
        };
        let n_assign = plan.assignments.len();
        let mean_of =
            |o: &AcrossOutcome| stats::mean(&(0..n_assign).map(|a| head(o, a)).collect::<Vec<_>>());
        let observed = stats::mean(&repeats.iter().map(|o| mean_of(o)).collect::<Vec<_>>());
        let null: Vec<f64> = shuffles.iter().map(|o| mean_of(o)).collect();
        let some = |v: f64| (!null.is_empty()).then_some(v);
        let spread = |f: &dyn Fn(&AcrossOutcome) -> f64| {
            Spread::of(&repeats.iter().map(|o| f(o)).collect::<Vec<_>>())
        };
        let assignments = (0..n_assign)
            .map(|a| {
                let r = &plan.assignments[a];
                let own_null: Vec<f64> = shuffles.iter().map(|o| head(o, a)).collect();
                let own = stats::mean(&repeats.iter().map(|o| head(o, a)).collect::<Vec<_>>());
                AssignmentResult {
                    index: a,
                    train: names(plan, &r.train),
                    test: names(plan, &r.test),
                    balance: balance_of(plan, a),
                    within_split: r.within,
                    within_folds: plan.within_folds(r),
                    accuracy: spread(&|o| o.accuracy[a][0]),
                    balanced_accuracy: spread(&|o| o.balanced_accuracy[a][0]),
                    within: Scores {
                        accuracy: spread(&|o| o.within_accuracy[a][0]),
                        balanced_accuracy: spread(&|o| o.within_balanced_accuracy[a][0]),
                    },
                    chance_threshold: binomial::chance_threshold(
                        r.test_size as u64,
                        k,
                        CHANCE_ALPHA,
                    ),
                    null_mean: (!own_null.is_empty()).then(|| stats::mean(&own_null)),
                    null_p95: (!own_null.is_empty()).then(|| stats::percentile(&own_null, 95.0)),
                    p_value: (!own_null.is_empty()).then(|| stats::permutation_p(own, &own_null)),
                }
            })
            .collect();
        let mean_over =
            |v: &Vec<Vec<f64>>| stats::mean(&v.iter().map(|a| a[0]).collect::<Vec<_>>());
        AcrossReport {
            schema: ACROSS_SCHEMA.into(),
            software: Software::current(),
            recipe: plan.recipe.clone(),
            classes: plan.data.classes.clone(),
            class_counts: plan.data.class_counts(),
            levels: plan.data.level_names.clone(),
            cell_counts: plan.data.cell_counts(),
            chance: ChanceLevel {
                level: 1.0 / k as f64,
            },
            assignments,
            repeats: repeats
                .iter()
                .map(|o| AcrossRepeat {
                    index: o.task.index(),
                    accuracy: mean_over(&o.accuracy),
                    balanced_accuracy: mean_over(&o.balanced_accuracy),
                    within_accuracy: mean_over(&o.within_accuracy),
                    within_balanced_accuracy: mean_over(&o.within_balanced_accuracy),
                })
                .collect(),
            summary: Scores {
                accuracy: spread(&|o| mean_over(&o.accuracy)),
                balanced_accuracy: spread(&|o| mean_over(&o.balanced_accuracy)),
            },
            within: Scores {
                accuracy: spread(&|o| mean_over(&o.within_accuracy)),
                balanced_accuracy: spread(&|o| mean_over(&o.within_balanced_accuracy)),
            },
            shuffle: AcrossShuffle {
                count: null.len(),
                repeats_each: if null.is_empty() {
                    0
                } else {
                    plan.recipe.shuffle_repeats()
                },
                permuted_within: c.permuted_within,
                observed,
                null_mean: some(stats::mean(&null)),
                null_sd: some(stats::sd(&null)),
                null_p95: some(stats::percentile(&null, 95.0)),
                p_value: some(stats::permutation_p(observed, &null)),
                null,
            },
            first_repeat: repeats
                .iter()
                .find(|o| o.task.index() == 0)
                .map(|o| {
                    o.decisions
                        .iter()
                        .enumerate()
                        .map(|(a, d)| AssignmentDecisions {
                            assignment: a,
                            decisions: d.clone(),
                        })
                        .collect()
                })
                .unwrap_or_default(),
            input: c.input,
            design: c.design,
            fits: c.fits,
            warnings: c.warnings,
            tuning: c.tuning,
        }
    }

    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a report always serialises")
    }

    /// The generalization score's spread (the headline).
    pub fn headline(&self) -> &Spread {
        match self.design.headline {
            Headline::Accuracy => &self.summary.accuracy,
            Headline::BalancedAccuracy => &self.summary.balanced_accuracy,
        }
    }

    /// The within-condition score's spread, in the headline's measure.
    pub fn within_headline(&self) -> &Spread {
        match self.design.headline {
            Headline::Accuracy => &self.within.accuracy,
            Headline::BalancedAccuracy => &self.within.balanced_accuracy,
        }
    }
}

impl AcrossTimeReport {
    /// Assemble a recording's result from every task's outcome (any order).
    pub fn build(plan: &AcrossPlan, outcomes: &[AcrossOutcome]) -> AcrossTimeReport {
        let (repeats, shuffles) = by_task(outcomes, |o| o.task);
        let c = common(plan, outcomes, &repeats);
        let win = &plan.data.features.windows;
        let nw = win.len();
        let k = plan.data.classes.len();
        let heads = |o: &AcrossOutcome| -> Vec<Vec<f64>> {
            o.accuracy
                .iter()
                .zip(&o.balanced_accuracy)
                .map(|(a, b)| {
                    a.iter()
                        .zip(b)
                        .map(|(&x, &y)| plan.headline_of(x, y))
                        .collect()
                })
                .collect()
        };
        let within_heads = |o: &AcrossOutcome| -> Vec<Vec<f64>> {
            o.within_accuracy
                .iter()
                .zip(&o.within_balanced_accuracy)
                .map(|(a, b)| {
                    a.iter()
                        .zip(b)
                        .map(|(&x, &y)| plan.headline_of(x, y))
                        .collect()
                })
                .collect()
        };
        let by_repeat: Vec<Vec<f64>> = repeats
            .iter()
            .map(|o| over_assignments(&heads(o)))
            .collect();
        let observed: Vec<f64> = (0..nw)
            .map(|w| stats::mean(&by_repeat.iter().map(|r| r[w]).collect::<Vec<_>>()))
            .collect();
        let null: Vec<Vec<f64>> = shuffles
            .iter()
            .map(|o| over_assignments(&heads(o)))
            .collect();
        let test = curve_test(&observed, &null);
        let alpha = plan.recipe.time.as_ref().map_or(0.05, |t| t.alpha);
        let clusters = time_clusters(test.as_ref(), win, alpha);
        let per_repeat = |f: &dyn Fn(&AcrossOutcome) -> Vec<f64>| -> Vec<Vec<f64>> {
            repeats.iter().map(|o| f(o)).collect()
        };
        let acc = per_repeat(&|o| over_assignments(&o.accuracy));
        let bacc = per_repeat(&|o| over_assignments(&o.balanced_accuracy));
        let wacc = per_repeat(&|o| over_assignments(&o.within_accuracy));
        let wbacc = per_repeat(&|o| over_assignments(&o.within_balanced_accuracy));
        let at = |v: &[Vec<f64>], w: usize| Spread::of(&v.iter().map(|r| r[w]).collect::<Vec<_>>());
        let windows = (0..nw)
            .map(|w| AcrossWindow {
                index: w,
                start: win[w].start,
                end: win[w].end,
                time: win[w].time,
                accuracy: at(&acc, w),
                balanced_accuracy: at(&bacc, w),
                within_accuracy: at(&wacc, w),
                within_balanced_accuracy: at(&wbacc, w),
                null_mean: (!null.is_empty())
                    .then(|| stats::mean(&null.iter().map(|n| n[w]).collect::<Vec<_>>())),
                null_p95: test.as_ref().map(|t| t.thresholds[w]),
                significant: in_significant(&clusters, w),
            })
            .collect();
        let assignments = (0..plan.assignments.len())
            .map(|a| {
                let r = &plan.assignments[a];
                let mean_curve = |f: &dyn Fn(&AcrossOutcome) -> Vec<Vec<f64>>| -> Vec<f64> {
                    (0..nw)
                        .map(|w| {
                            stats::mean(&repeats.iter().map(|o| f(o)[a][w]).collect::<Vec<_>>())
                        })
                        .collect()
                };
                AssignmentCurve {
                    index: a,
                    train: names(plan, &r.train),
                    test: names(plan, &r.test),
                    balance: balance_of(plan, a),
                    within_split: r.within,
                    within_folds: plan.within_folds(r),
                    curve: mean_curve(&heads),
                    within_curve: mean_curve(&within_heads),
                }
            })
            .collect();
        let generalization = plan
            .generalize
            .then(|| matrix(plan, &repeats, &shuffles, alpha));
        let mut warnings = c.warnings;
        if let Some(g) = generalization.as_ref().filter(|_| !shuffles.is_empty()) {
            warnings.push(generalization_caveat(g.null_method).to_string());
        }
        AcrossTimeReport {
            schema: ACROSS_TIME_SCHEMA.into(),
            software: Software::current(),
            recipe: plan.recipe.clone(),
            classes: plan.data.classes.clone(),
            class_counts: plan.data.class_counts(),
            levels: plan.data.level_names.clone(),
            cell_counts: plan.data.cell_counts(),
            chance: ChanceLevel {
                level: 1.0 / k as f64,
            },
            assignments,
            windows,
            repeats: repeats
                .iter()
                .enumerate()
                .map(|(i, o)| AcrossRepeatCurves {
                    index: o.task.index(),
                    accuracy: acc[i].clone(),
                    balanced_accuracy: bacc[i].clone(),
                    within_accuracy: wacc[i].clone(),
                    within_balanced_accuracy: wbacc[i].clone(),
                })
                .collect(),
            shuffle: AcrossCurveShuffle {
                count: null.len(),
                repeats_each: if null.is_empty() {
                    0
                } else {
                    plan.recipe.shuffle_repeats()
                },
                permuted_within: c.permuted_within,
                cluster_percentile: CLUSTER_PERCENTILE,
                null_max_mass: test.map(|t| t.null_max_mass).unwrap_or_default(),
                null,
            },
            onset: onset(&clusters, win),
            clusters,
            generalization,
            input: c.input,
            design: c.design,
            fits: c.fits,
            warnings,
            tuning: c.tuning,
        }
    }

    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a report always serialises")
    }

    /// The headline mean at each window (generalization, mean over assignments).
    pub fn curve(&self) -> Vec<f64> {
        self.windows
            .iter()
            .map(|w| match self.design.headline {
                Headline::Accuracy => w.accuracy.mean,
                Headline::BalancedAccuracy => w.balanced_accuracy.mean,
            })
            .collect()
    }

    /// The within-condition headline mean at each window.
    pub fn within_curve(&self) -> Vec<f64> {
        self.windows
            .iter()
            .map(|w| match self.design.headline {
                Headline::Accuracy => w.within_accuracy.mean,
                Headline::BalancedAccuracy => w.within_balanced_accuracy.mean,
            })
            .collect()
    }
}

/// The train × test matrix (mean over assignments), its null thresholds and its clusters.
fn matrix(
    plan: &AcrossPlan,
    repeats: &[&AcrossOutcome],
    shuffles: &[&AcrossOutcome],
    alpha: f64,
) -> Generalization {
    let nw = plan.n_windows();
    let combined = |o: &AcrossOutcome| -> Vec<f64> {
        (0..nw * nw)
            .map(|c| stats::mean(&o.matrix.iter().map(|m| m[c]).collect::<Vec<_>>()))
            .collect()
    };
    let by_repeat: Vec<Vec<f64>> = repeats.iter().map(|o| combined(o)).collect();
    let mean: Vec<f64> = (0..nw * nw)
        .map(|c| stats::mean(&by_repeat.iter().map(|r| r[c]).collect::<Vec<_>>()))
        .collect();
    let null: Vec<Vec<f64>> = shuffles.iter().map(|o| combined(o)).collect();
    let test = (!null.is_empty()).then(|| {
        let refs: Vec<&[f64]> = null.iter().map(Vec::as_slice).collect();
        clusters::test(&mean, &refs, nw, nw)
    });
    let win = &plan.data.features.windows;
    let mut significant = vec![false; nw * nw];
    let found = test
        .iter()
        .flat_map(|t| &t.clusters)
        .map(|c| {
            let sig = c.p_value < alpha;
            let (mut tr, mut te) = ((usize::MAX, 0), (usize::MAX, 0));
            for &cell in &c.cells {
                let (a, b) = (cell / nw, cell % nw);
                tr = (tr.0.min(a), tr.1.max(a));
                te = (te.0.min(b), te.1.max(b));
                significant[cell] |= sig;
            }
            GridCluster {
                train_start: win[tr.0].time,
                train_end: win[tr.1].time,
                test_start: win[te.0].time,
                test_end: win[te.1].time,
                cells: c.cells.len(),
                mass: c.mass,
                p_value: c.p_value,
                significant: sig,
            }
        })
        .collect();
    let rows = |flat: &[f64]| flat.chunks(nw).map(<[f64]>::to_vec).collect::<Vec<_>>();
    Generalization {
        null_method: plan
            .matrix_null
            .expect("a matrix only with temporal generalization"),
        scores: rows(&mean),
        null_p95: test.as_ref().map(|t| rows(&t.thresholds)),
        null_max_mass: test.map(|t| t.null_max_mass).unwrap_or_default(),
        clusters: found,
        significant: significant.chunks(nw).map(<[bool]>::to_vec).collect(),
    }
}
