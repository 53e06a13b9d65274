//! The result of a time-resolved analysis.
//!
//! Schema `popdecode-timecourse/1` (same family as `popdecode-result/1`; fields are only ever added):
//! * `schema`, `software`, `recipe`, `classes`, `class_counts`, `design`, `chance`, `fits`, `warnings`, `tuning`:
//!   as in a trial-table result
//! * `input` {`kind` ("binned", "events" or "nwb"), `files` [{`file`, `sha256`}], `trials`, `neurons`, `label_column`,
//!   `group_column`, `groups`, `spikes_total`, `spikes_outside`}
//! * `windows`: per window {`index`, `start`, `end`, `time` (centre, s), `accuracy` and `balanced_accuracy`
//!   (each `mean` over cross-validation repeats, and `sd`, `p2_5`, `p97_5`: its variability over those repeats,
//!   which reflects how trials were split, not a confidence interval), `null_mean`, `null_p95` (null when no
//!   shuffles),
//!   `significant` (inside a significant cluster)}
//! * `repeats`: per observed repeat {`index`, `accuracy`, `balanced_accuracy`} with one value per window
//! * `shuffle` {`count`, `repeats_each`, `within_groups`, `cluster_percentile`, `null` (per shuffle, the headline
//!   score at each window), `null_max_mass` (per shuffle, its largest cluster mass)}
//! * `clusters`: per cluster of the curve {`start`, `end` (centres of its first and last window, s),
//!   `window_start`, `window_end` (edges, s), `first_window`, `last_window`, `mass`, `p_value`, `significant`}
//! * `onset`: {`time`, `window`, `window_start`} of the first window of the earliest significant cluster, or null
//! * `generalization` (null unless asked): {`null_method` ("training-labels": each shuffle permuted only the
//!   training trials' labels, once for all its repeats, and kept the test labels; "all-labels": each shuffle
//!   permuted every label, the curve's own null), `scores` (rows = training window, columns = testing window,
//!   headline mean over repeats), `null_p95` (same shape, null when no shuffles), `null_max_mass`, `clusters`
//!   [{`train_start`, `train_end`, `test_start`, `test_end` (window centres, s), `cells`, `mass`, `p_value`,
//!   `significant`}], `significant` (same shape, cells inside a significant cluster)}; with the matrix, `warnings`
//!   carries the caveat on reading its cells for the null used
//! * `shuffle.null` is the curve's null (every label permuted) in every case

use super::plan::{TimeOutcome, TimePlan};
use crate::data::time::TimeDataset;
use crate::data::SourceFile;
use crate::recipe::{GeneralizationNull, Recipe, TimeInput};
use crate::report::{by_task, ungrouped_inner_warning, Chance, Design, Fits, Software, Tuning};
use crate::resample::Headline;
use crate::stats::clusters::{self, ClusterTest, CLUSTER_PERCENTILE};
use crate::stats::{self, Spread};
use serde::{Deserialize, Serialize};

pub const TIME_SCHEMA: &str = "popdecode-timecourse/1";

/// What every temporal generalization result says about its cells, for the null it was tested against.
pub fn generalization_caveat(null: GeneralizationNull) -> &'static str {
    match null {
        GeneralizationNull::TrainingLabels => {
            "temporal generalization: the matrix's null permuted only the training trials' labels (one \
             permutation per shuffle, shared by its repeats) and kept the test trials' labels, so a cell is \
             significant only when what the decoder learnt at its training window generalizes to its testing \
             window; still, a cluster shows that \
             information generalizes somewhere inside it, not at each of its cells (Sassenhagen & Draschkow, \
             2019), so read the edges of off-diagonal clusters as approximate"
        }
        GeneralizationNull::AllLabels => {
            "temporal generalization with the all-labels null: the permutations removed information from every \
             window at once, so where the testing window carries information, a decoder trained at a window \
             without any can score away from chance by a chance alignment with it, and cells trained before any \
             information can be significant; read off-diagonal cells with care (the training-labels null, the \
             default, permutes only the training labels and does not have this problem)"
        }
    }
}

/// What every analysis of a recording says about onsets found by a cluster test.
pub const ONSET_CAVEAT: &str = "a cluster test shows that information is present somewhere in a cluster; it does \
     not localise the onset to a window (Sassenhagen & Draschkow, 2019), so treat the onset as approximate";

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TimeReport {
    pub schema: String,
    pub software: Software,
    pub input: TimeInputInfo,
    pub recipe: Recipe,
    pub classes: Vec<String>,
    pub class_counts: Vec<usize>,
    pub design: Design,
    pub chance: Chance,
    pub windows: Vec<WindowResult>,
    pub repeats: Vec<TimeRepeat>,
    pub shuffle: TimeShuffle,
    pub clusters: Vec<TimeCluster>,
    pub onset: Option<Onset>,
    pub generalization: Option<Generalization>,
    pub fits: Fits,
    pub warnings: Vec<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tuning: Option<Tuning>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TimeInputInfo {
    pub kind: String,
    pub files: Vec<SourceFile>,
    pub trials: usize,
    pub neurons: Vec<String>,
    pub label_column: String,
    pub group_column: Option<String>,
    pub groups: Vec<String>,
    pub spikes_total: u64,
    pub spikes_outside: u64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct WindowResult {
    pub index: usize,
    pub start: f64,
    pub end: f64,
    pub time: f64,
    pub accuracy: Spread,
    pub balanced_accuracy: Spread,
    pub null_mean: Option<f64>,
    pub null_p95: Option<f64>,
    pub significant: bool,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TimeRepeat {
    pub index: usize,
    pub accuracy: Vec<f64>,
    pub balanced_accuracy: Vec<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TimeShuffle {
    pub count: usize,
    pub repeats_each: usize,
    pub within_groups: bool,
    pub cluster_percentile: f64,
    pub null: Vec<Vec<f64>>,
    pub null_max_mass: Vec<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TimeCluster {
    pub start: f64,
    pub end: f64,
    pub window_start: f64,
    pub window_end: f64,
    pub first_window: usize,
    pub last_window: usize,
    pub mass: f64,
    pub p_value: f64,
    pub significant: bool,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Onset {
    pub time: f64,
    pub window: usize,
    pub window_start: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Generalization {
    /// How the matrix's permutations were made.
    #[serde(default = "training_labels")]
    pub null_method: GeneralizationNull,
    pub scores: Vec<Vec<f64>>,
    pub null_p95: Option<Vec<Vec<f64>>>,
    pub null_max_mass: Vec<f64>,
    pub clusters: Vec<GridCluster>,
    pub significant: Vec<Vec<bool>>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GridCluster {
    pub train_start: f64,
    pub train_end: f64,
    pub test_start: f64,
    pub test_end: f64,
    pub cells: usize,
    pub mass: f64,
    pub p_value: f64,
    pub significant: bool,
}

fn training_labels() -> GeneralizationNull {
    GeneralizationNull::TrainingLabels
}

fn rows(flat: &[f64], n: usize) -> Vec<Vec<f64>> {
    flat.chunks(n).map(<[f64]>::to_vec).collect()
}

impl TimeReport {
    /// Assemble the report from every task's outcome (any order; sorted by task here).
    pub fn build(plan: &TimePlan, outcomes: &[TimeOutcome]) -> TimeReport {
        let data: &TimeDataset = &plan.data;
        let nw = plan.n_windows();
        let alpha = plan.settings.alpha;
        let (repeats, shuffles) = by_task(outcomes, |o| o.task);
        let observed_by_repeat: Vec<Vec<f64>> =
            repeats.iter().map(|o| plan.headline_scores(o)).collect();
        let observed: Vec<f64> = (0..nw)
            .map(|w| stats::mean(&observed_by_repeat.iter().map(|r| r[w]).collect::<Vec<_>>()))
            .collect();
        let null: Vec<Vec<f64>> = shuffles.iter().map(|o| plan.headline_scores(o)).collect();
        let has_null = !null.is_empty();

        let curve_test = has_null.then(|| {
            let refs: Vec<&[f64]> = null.iter().map(Vec::as_slice).collect();
            clusters::test(&observed, &refs, 1, nw)
        });
        let win = &data.windows;
        let clusters: Vec<TimeCluster> = curve_test
            .iter()
            .flat_map(|t| &t.clusters)
            .map(|c| {
                let (a, b) = (c.cells[0], *c.cells.last().expect("a cluster has cells"));
                TimeCluster {
                    start: win[a].time,
                    end: win[b].time,
                    window_start: win[a].start,
                    window_end: win[b].end,
                    first_window: a,
                    last_window: b,
                    mass: c.mass,
                    p_value: c.p_value,
                    significant: c.p_value < alpha,
                }
            })
            .collect();
        let onset = clusters.iter().find(|c| c.significant).map(|c| Onset {
            time: win[c.first_window].time,
            window: c.first_window,
            window_start: win[c.first_window].start,
        });

        let windows = (0..nw)
            .map(|w| {
                let at = |f: fn(&TimeOutcome) -> &Vec<f64>| {
                    repeats.iter().map(|o| f(o)[w]).collect::<Vec<f64>>()
                };
                let null_here: Vec<f64> = null.iter().map(|n| n[w]).collect();
                WindowResult {
                    index: w,
                    start: win[w].start,
                    end: win[w].end,
                    time: win[w].time,
                    accuracy: Spread::of(&at(|o| &o.accuracy)),
                    balanced_accuracy: Spread::of(&at(|o| &o.balanced_accuracy)),
                    null_mean: has_null.then(|| stats::mean(&null_here)),
                    null_p95: curve_test.as_ref().map(|t| t.thresholds[w]),
                    significant: clusters
                        .iter()
                        .any(|c| c.significant && (c.first_window..=c.last_window).contains(&w)),
                }
            })
            .collect();

        let generalization = plan
            .settings
            .generalize
            .then(|| generalization(plan, &repeats, &shuffles, alpha));

        let fits = Fits::sum(
            outcomes
                .iter()
                .map(|o| (o.fits, o.capped_fits, o.single_class_fits)),
        );
        let mut warnings = fits.with_warnings(&plan.scheme.warnings);
        if plan.settings.generalize {
            warnings.push(generalization_caveat(plan.settings.generalization_null()).to_string());
        }
        let ungrouped: u64 = outcomes.iter().map(|o| u64::from(o.ungrouped_inner)).sum();
        if ungrouped > 0 {
            warnings.push(ungrouped_inner_warning(ungrouped, fits.total));
        }
        if has_null && plan.recipe.shuffles < 100 {
            warnings.push(format!(
                "only {} shuffles: the cluster p-values cannot go below {}, and the per-window 95th percentiles \
                 are rough; 200 or more are usual",
                plan.recipe.shuffles,
                crate::report::text::floor_words(plan.recipe.shuffles)
            ));
        }
        let n_classes = data.classes.len();
        TimeReport {
            schema: TIME_SCHEMA.into(),
            software: Software::current(),
            input: TimeInputInfo {
                kind: match plan.settings.input {
                    TimeInput::Binned { .. } => "binned",
                    TimeInput::Events { .. } => "events",
                    TimeInput::Nwb { .. } => "nwb",
                }
                .into(),
                files: data.files.clone(),
                trials: data.n_trials(),
                neurons: data.neurons.clone(),
                label_column: data.label_column.clone(),
                group_column: data.group_column.clone(),
                groups: data.group_names.clone(),
                spikes_total: data.spikes_total,
                spikes_outside: data.spikes_outside,
            },
            recipe: plan.recipe.clone(),
            classes: data.classes.clone(),
            class_counts: data.class_counts(),
            design: Design::of(&plan.scheme),
            chance: Chance::of(&plan.scheme, n_classes),
            windows,
            repeats: repeats
                .iter()
                .map(|o| TimeRepeat {
                    index: o.task.index(),
                    accuracy: o.accuracy.clone(),
                    balanced_accuracy: o.balanced_accuracy.clone(),
                })
                .collect(),
            shuffle: TimeShuffle {
                count: null.len(),
                repeats_each: if has_null {
                    plan.recipe.shuffle_repeats()
                } else {
                    0
                },
                within_groups: data.groups.is_some(),
                cluster_percentile: CLUSTER_PERCENTILE,
                null_max_mass: curve_test.map(|t| t.null_max_mass).unwrap_or_default(),
                null,
            },
            clusters,
            onset,
            generalization,
            fits,
            warnings,
            tuning: Tuning::of(&plan.recipe, repeats.iter().flat_map(|o| &o.chosen)),
        }
    }

    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a report always serialises")
    }

    /// Headline mean at each window.
    pub fn curve(&self) -> Vec<f64> {
        self.windows
            .iter()
            .map(|w| match self.design.headline {
                Headline::Accuracy => w.accuracy.mean,
                Headline::BalancedAccuracy => w.balanced_accuracy.mean,
            })
            .collect()
    }
}

/// The train × test matrix, its null thresholds and its clusters.
fn generalization(
    plan: &TimePlan,
    repeats: &[&TimeOutcome],
    shuffles: &[&TimeOutcome],
    alpha: f64,
) -> Generalization {
    let nw = plan.n_windows();
    let mean: Vec<f64> = (0..nw * nw)
        .map(|c| {
            stats::mean(
                &repeats
                    .iter()
                    .map(|o| o.generalization[c])
                    .collect::<Vec<_>>(),
            )
        })
        .collect();
    let test: Option<ClusterTest> = (!shuffles.is_empty()).then(|| {
        let refs: Vec<&[f64]> = shuffles
            .iter()
            .map(|o| o.generalization.as_slice())
            .collect();
        clusters::test(&mean, &refs, nw, nw)
    });
    let win = &plan.data.windows;
    let mut significant = vec![false; nw * nw];
    let clusters = test
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
    Generalization {
        null_method: plan.settings.generalization_null(),
        scores: rows(&mean, nw),
        null_p95: test.as_ref().map(|t| rows(&t.thresholds, nw)),
        null_max_mass: test.map(|t| t.null_max_mass).unwrap_or_default(),
        clusters,
        significant: significant.chunks(nw).map(<[bool]>::to_vec).collect(),
    }
}

/// Run every task one after the other (tests, examples, faces without parallelism).
pub fn run_all(plan: &TimePlan) -> TimeReport {
    let outcomes: Vec<TimeOutcome> = plan.tasks().into_iter().map(|t| plan.run(t)).collect();
    TimeReport::build(plan, &outcomes)
}
