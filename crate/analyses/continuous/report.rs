//! The result of decoding a continuous (or circular) variable.
//!
//! Schema `popdecode-continuous/1` (a trial table; fields are only ever added):
//! * `schema`, `software` {`name`, `version`}, `recipe` (as a recipe file holds it)
//! * `input` {`kind` ("table", "binned", "events" or "nwb"), `files` [{`file`, `sha256`}], `trials`, `features`,
//!   `label_column`, `group_column`, `groups`, `dropped_lines`, `skipped_columns`, `spikes_total`, `spikes_outside`}
//! * `target` {`column`, `variable` ("linear" or "circular"), `unit` (angles: "degrees" or "radians"), `mean`, `sd`,
//!   `min`, `max` (a quantity), `mean_direction`, `resultant_length` (an angle)}
//! * `design` {`split` (`k_fold`, `leave_one_out`, `grouped` or `leave_one_group_out`), `folds`, `trials_per_repeat`,
//!   `headline` ("r2" or "angular_error"), `inner_folds`}
//! * `repeats`: per observed repeat {`index`, `r2`, `correlation`, `angular_error` (angles)}
//! * `summary` {`r2`, `correlation`, `angular_error` (angles only), each {`mean`, `sd`, `p2_5`, `p97_5`} over
//!   repeats}: `r2` is out-of-sample R² against each test trial's training-fold mean (for an angle, of its cosine and
//!   sine together), `correlation` Pearson's r (for an angle, the circular correlation of Jammalamadaka & SenGupta)
//! * `shuffle` {`count`, `repeats_each`, `within_groups`, `score` (the headline's name), `observed`, `null` (one
//!   headline score per shuffle), `null_mean`, `null_sd`, `null_p5`, `null_p95`, `p_value` (the fraction of shuffles
//!   at least as good: R² at least as large, an angular error at most as large)}; statistics null without shuffles
//! * `predictions` {`repeat` (0), `fold`, `actual`, `predicted`}: every trial's prediction in observed repeat 0
//! * `penalty` {`grid`, `chosen` [{`alpha`, `fits`}]}: how often nested cross-validation chose each α
//! * `fits` {`total`}, `warnings`
//!
//! Schema `popdecode-continuous-timecourse/1` (a recording): the same `input`, `target`, `design`, `penalty`, `fits`
//! and `warnings`, and
//! * `windows`: per window {`index`, `start`, `end`, `time`, `r2`, `correlation`, `angular_error` (angles), each a
//!   spread over repeats, `null_mean` and `null_threshold` of the headline score (the shuffles' 95th percentile of
//!   R², or 5th percentile of the angular error), `significant`}
//! * `repeats`: per observed repeat {`index`, `r2`, `correlation`, `angular_error`}, one value per window
//! * `shuffle` {`count`, `repeats_each`, `within_groups`, `score`, `cluster_percentile`, `null` (per shuffle, the
//!   headline at each window), `null_max_mass`}
//! * `clusters`, `onset`: as in `popdecode-timecourse/1`, from the cluster test on the headline score (an angular
//!   error enters it negated, so that a cluster is a span decoded better than the shuffles)
//! * `predictions` {`repeat` (0), `window` (the best window), `time`, `fold`, `actual`, `predicted`}

use super::plan::{ContinuousOutcome, ContinuousPlan, ValueSplit, Variable};
use crate::analyses::over_time::{curve_test, in_significant, onset, time_clusters};
use crate::analyses::time_course::report::{Onset, TimeCluster};
use crate::data::SourceFile;
use crate::decoders::ridge::{ALPHA_GRID, INNER_FOLDS};
use crate::recipe::{AngleUnit, Recipe, TimeInput};
use crate::report::{by_task, Software};
use crate::stats::clusters::CLUSTER_PERCENTILE;
use crate::stats::{self, circular, Spread};
use serde::{Deserialize, Serialize};

pub const CONTINUOUS_SCHEMA: &str = "popdecode-continuous/1";
pub const CONTINUOUS_TIME_SCHEMA: &str = "popdecode-continuous-timecourse/1";

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ContinuousReport {
    pub schema: String,
    pub software: Software,
    pub input: InputInfo,
    pub recipe: Recipe,
    pub target: TargetInfo,
    pub design: ValueDesign,
    pub repeats: Vec<RepeatScores>,
    pub summary: Summary,
    pub shuffle: ValueShuffle,
    pub predictions: PredictionTable,
    pub penalty: Penalty,
    pub fits: ValueFits,
    pub warnings: Vec<String>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ContinuousTimeReport {
    pub schema: String,
    pub software: Software,
    pub input: InputInfo,
    pub recipe: Recipe,
    pub target: TargetInfo,
    pub design: ValueDesign,
    pub windows: Vec<ValueWindow>,
    pub repeats: Vec<RepeatCurves>,
    pub shuffle: CurveShuffle,
    pub clusters: Vec<TimeCluster>,
    pub onset: Option<Onset>,
    pub predictions: PredictionTable,
    pub penalty: Penalty,
    pub fits: ValueFits,
    pub warnings: Vec<String>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct InputInfo {
    pub kind: String,
    pub files: Vec<SourceFile>,
    pub trials: usize,
    pub features: Vec<String>,
    pub label_column: String,
    pub group_column: Option<String>,
    pub groups: Vec<String>,
    pub dropped_lines: Vec<u64>,
    pub skipped_columns: Vec<String>,
    pub spikes_total: u64,
    pub spikes_outside: u64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TargetInfo {
    pub column: String,
    pub variable: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub unit: Option<AngleUnit>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mean: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sd: Option<f64>,
    pub min: f64,
    pub max: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mean_direction: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub resultant_length: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ValueDesign {
    pub split: ValueSplit,
    pub folds: usize,
    pub trials_per_repeat: usize,
    pub headline: String,
    pub inner_folds: usize,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RepeatScores {
    pub index: usize,
    pub r2: f64,
    pub correlation: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub angular_error: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Summary {
    pub r2: Spread,
    pub correlation: Spread,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub angular_error: Option<Spread>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ValueShuffle {
    pub count: usize,
    pub repeats_each: usize,
    pub within_groups: bool,
    pub score: String,
    pub observed: f64,
    pub null: Vec<f64>,
    pub null_mean: Option<f64>,
    pub null_sd: Option<f64>,
    pub null_p5: Option<f64>,
    pub null_p95: Option<f64>,
    pub p_value: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PredictionTable {
    pub repeat: usize,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub window: Option<usize>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub time: Option<f64>,
    pub fold: Vec<usize>,
    pub actual: Vec<f64>,
    pub predicted: Vec<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Penalty {
    pub grid: Vec<f64>,
    pub chosen: Vec<ChosenAlpha>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ChosenAlpha {
    pub alpha: f64,
    pub fits: u64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ValueFits {
    pub total: u64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ValueWindow {
    pub index: usize,
    pub start: f64,
    pub end: f64,
    pub time: f64,
    pub r2: Spread,
    pub correlation: Spread,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub angular_error: Option<Spread>,
    pub null_mean: Option<f64>,
    pub null_threshold: Option<f64>,
    pub significant: bool,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RepeatCurves {
    pub index: usize,
    pub r2: Vec<f64>,
    pub correlation: Vec<f64>,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub angular_error: Vec<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CurveShuffle {
    pub count: usize,
    pub repeats_each: usize,
    pub within_groups: bool,
    pub score: String,
    pub cluster_percentile: f64,
    pub null: Vec<Vec<f64>>,
    pub null_max_mass: Vec<f64>,
}

/// What both schemas share, from the plan and the outcomes.
struct Common {
    input: InputInfo,
    target: TargetInfo,
    design: ValueDesign,
    penalty: Penalty,
    fits: ValueFits,
}

fn common(
    plan: &ContinuousPlan,
    outcomes: &[ContinuousOutcome],
    repeats: &[&ContinuousOutcome],
) -> Common {
    let f = &plan.data.features;
    let values = &plan.data.values;
    let kind = match plan.recipe.time.as_ref().map(|t| &t.input) {
        None => "table",
        Some(TimeInput::Binned { .. }) => "binned",
        Some(TimeInput::Events { .. }) => "events",
        Some(TimeInput::Nwb { .. }) => "nwb",
    };
    let (lo, hi) = values
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        });
    let target = match plan.variable {
        Variable::Linear => TargetInfo {
            column: plan.data.column.clone(),
            variable: "linear".into(),
            unit: None,
            mean: Some(stats::mean(values)),
            sd: Some(stats::sd(values)),
            min: lo,
            max: hi,
            mean_direction: None,
            resultant_length: None,
        },
        Variable::Circular(unit) => {
            let k = unit.to_radians();
            let rad: Vec<f64> = values.iter().map(|v| v * k).collect();
            let (mut s, mut c) = (0.0, 0.0);
            for &a in &rad {
                s += libm::sin(a);
                c += libm::cos(a);
            }
            TargetInfo {
                column: plan.data.column.clone(),
                variable: "circular".into(),
                unit: Some(unit),
                mean: None,
                sd: None,
                min: lo,
                max: hi,
                mean_direction: Some(
                    circular::mean_direction(&rad).rem_euclid(2.0 * std::f64::consts::PI) / k,
                ),
                resultant_length: Some((s * s + c * c).sqrt() / rad.len() as f64),
            }
        }
    };
    let mut counts = vec![0u64; ALPHA_GRID.len()];
    for o in repeats {
        for (c, &a) in counts.iter_mut().zip(&o.alphas) {
            *c += u64::from(a);
        }
    }
    Common {
        input: InputInfo {
            kind: kind.into(),
            files: f.files.clone(),
            trials: values.len(),
            features: f.names.clone(),
            label_column: plan.data.column.clone(),
            group_column: f.group_column.clone(),
            groups: f.group_names.clone(),
            dropped_lines: f.dropped_lines.clone(),
            skipped_columns: f.skipped_columns.clone(),
            spikes_total: f.spikes_total,
            spikes_outside: f.spikes_outside,
        },
        target,
        design: ValueDesign {
            split: plan.split,
            folds: plan.folds(),
            trials_per_repeat: values.len(),
            headline: headline_key(plan).into(),
            inner_folds: INNER_FOLDS,
        },
        penalty: Penalty {
            grid: ALPHA_GRID.to_vec(),
            chosen: ALPHA_GRID
                .iter()
                .zip(counts)
                .map(|(&alpha, fits)| ChosenAlpha { alpha, fits })
                .collect(),
        },
        fits: ValueFits {
            total: outcomes.iter().map(|o| u64::from(o.fits)).sum(),
        },
    }
}

/// The headline's key in the JSON.
pub fn headline_key(plan: &ContinuousPlan) -> &'static str {
    if plan.higher_is_better() {
        "r2"
    } else {
        "angular_error"
    }
}

/// The shuffle warning every result with few shuffles carries.
fn shuffle_warnings(plan: &ContinuousPlan, over_time: bool) -> Vec<String> {
    let mut warnings = plan.warnings.clone();
    let m = plan.recipe.shuffles;
    if m > 0 && m < 100 {
        warnings.push(format!(
            "only {m} shuffles: p-values cannot go below {}{}; 200 or more are usual",
            crate::report::text::floor_words(m),
            if over_time {
                ", and the per-window thresholds are rough"
            } else {
                ""
            }
        ));
    }
    warnings
}

fn predictions(
    plan: &ContinuousPlan,
    repeats: &[&ContinuousOutcome],
    window: usize,
) -> PredictionTable {
    let p = repeats
        .iter()
        .find(|o| o.task.index() == 0)
        .and_then(|o| o.predictions.as_ref());
    PredictionTable {
        repeat: 0,
        window: plan.data.features.is_time().then_some(window),
        time: plan.data.features.windows.get(window).map(|w| w.time),
        fold: p.map(|p| p.fold.clone()).unwrap_or_default(),
        actual: if p.is_some() {
            plan.data.values.clone()
        } else {
            Vec::new()
        },
        predicted: p.map(|p| p.predicted[window].clone()).unwrap_or_default(),
    }
}

impl ContinuousReport {
    /// Assemble a trial table's result from every task's outcome (any order).
    pub fn build(plan: &ContinuousPlan, outcomes: &[ContinuousOutcome]) -> ContinuousReport {
        let (repeats, shuffles) = by_task(outcomes, |o| o.task);
        let c = common(plan, outcomes, &repeats);
        let at0 = |v: &Vec<f64>| v.first().copied().unwrap_or(f64::NAN);
        let scores = |f: fn(&ContinuousOutcome) -> &Vec<f64>| {
            repeats.iter().map(|o| at0(f(o))).collect::<Vec<f64>>()
        };
        let angles = !plan.higher_is_better();
        let observed = stats::mean(
            &repeats
                .iter()
                .map(|o| plan.headline(o)[0])
                .collect::<Vec<_>>(),
        );
        let null: Vec<f64> = shuffles.iter().map(|o| plan.headline(o)[0]).collect();
        let some = |v: f64| (!null.is_empty()).then_some(v);
        let p_value = if angles {
            let negated: Vec<f64> = null.iter().map(|v| -v).collect();
            stats::permutation_p(-observed, &negated)
        } else {
            stats::permutation_p(observed, &null)
        };
        ContinuousReport {
            schema: CONTINUOUS_SCHEMA.into(),
            software: Software::current(),
            recipe: plan.recipe.clone(),
            repeats: repeats
                .iter()
                .map(|o| RepeatScores {
                    index: o.task.index(),
                    r2: at0(&o.r2),
                    correlation: at0(&o.correlation),
                    angular_error: angles.then(|| at0(&o.angular_error)),
                })
                .collect(),
            summary: Summary {
                r2: Spread::of(&scores(|o| &o.r2)),
                correlation: Spread::of(&scores(|o| &o.correlation)),
                angular_error: angles.then(|| Spread::of(&scores(|o| &o.angular_error))),
            },
            shuffle: ValueShuffle {
                count: null.len(),
                repeats_each: if null.is_empty() {
                    0
                } else {
                    plan.recipe.shuffle_repeats()
                },
                within_groups: plan.data.features.groups.is_some(),
                score: headline_key(plan).into(),
                observed,
                null_mean: some(stats::mean(&null)),
                null_sd: some(stats::sd(&null)),
                null_p5: some(stats::percentile(&null, 5.0)),
                null_p95: some(stats::percentile(&null, 95.0)),
                p_value: some(p_value),
                null,
            },
            predictions: predictions(plan, &repeats, 0),
            warnings: shuffle_warnings(plan, false),
            input: c.input,
            target: c.target,
            design: c.design,
            penalty: c.penalty,
            fits: c.fits,
        }
    }

    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a report always serialises")
    }

    /// The headline score's spread over repeats.
    pub fn headline(&self) -> &Spread {
        self.summary
            .angular_error
            .as_ref()
            .unwrap_or(&self.summary.r2)
    }
}

impl ContinuousTimeReport {
    /// Assemble a recording's result from every task's outcome (any order).
    pub fn build(plan: &ContinuousPlan, outcomes: &[ContinuousOutcome]) -> ContinuousTimeReport {
        let (repeats, shuffles) = by_task(outcomes, |o| o.task);
        let c = common(plan, outcomes, &repeats);
        let win = &plan.data.features.windows;
        let nw = win.len();
        let angles = !plan.higher_is_better();
        // Larger is better inside the cluster test: angular errors enter negated.
        let sign = if angles { -1.0 } else { 1.0 };
        let oriented = |v: &[f64]| v.iter().map(|x| sign * x).collect::<Vec<f64>>();
        let observed: Vec<f64> = (0..nw)
            .map(|w| {
                stats::mean(
                    &repeats
                        .iter()
                        .map(|o| plan.headline(o)[w])
                        .collect::<Vec<_>>(),
                )
            })
            .collect();
        let null: Vec<Vec<f64>> = shuffles.iter().map(|o| plan.headline(o).to_vec()).collect();
        let oriented_null: Vec<Vec<f64>> = null.iter().map(|n| oriented(n)).collect();
        let test = curve_test(&oriented(&observed), &oriented_null);
        let alpha = plan.recipe.time.as_ref().map_or(0.05, |t| t.alpha);
        let clusters = time_clusters(test.as_ref(), win, alpha);
        let at = |w: usize, f: fn(&ContinuousOutcome) -> &Vec<f64>| {
            repeats.iter().map(|o| f(o)[w]).collect::<Vec<f64>>()
        };
        let windows = (0..nw)
            .map(|w| ValueWindow {
                index: w,
                start: win[w].start,
                end: win[w].end,
                time: win[w].time,
                r2: Spread::of(&at(w, |o| &o.r2)),
                correlation: Spread::of(&at(w, |o| &o.correlation)),
                angular_error: angles.then(|| Spread::of(&at(w, |o| &o.angular_error))),
                null_mean: (!null.is_empty())
                    .then(|| stats::mean(&null.iter().map(|n| n[w]).collect::<Vec<_>>())),
                null_threshold: test.as_ref().map(|t| sign * t.thresholds[w]),
                significant: in_significant(&clusters, w),
            })
            .collect();
        let best = (0..nw).fold(0, |b, w| {
            if sign * observed[w] > sign * observed[b] {
                w
            } else {
                b
            }
        });
        ContinuousTimeReport {
            schema: CONTINUOUS_TIME_SCHEMA.into(),
            software: Software::current(),
            recipe: plan.recipe.clone(),
            windows,
            repeats: repeats
                .iter()
                .map(|o| RepeatCurves {
                    index: o.task.index(),
                    r2: o.r2.clone(),
                    correlation: o.correlation.clone(),
                    angular_error: o.angular_error.clone(),
                })
                .collect(),
            shuffle: CurveShuffle {
                count: null.len(),
                repeats_each: if null.is_empty() {
                    0
                } else {
                    plan.recipe.shuffle_repeats()
                },
                within_groups: plan.data.features.groups.is_some(),
                score: headline_key(plan).into(),
                cluster_percentile: CLUSTER_PERCENTILE,
                null_max_mass: test.map(|t| t.null_max_mass).unwrap_or_default(),
                null,
            },
            onset: onset(&clusters, win),
            clusters,
            predictions: predictions(plan, &repeats, best),
            warnings: shuffle_warnings(plan, true),
            input: c.input,
            target: c.target,
            design: c.design,
            penalty: c.penalty,
            fits: c.fits,
        }
    }

    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a report always serialises")
    }

    /// The headline score's mean at each window.
    pub fn curve(&self) -> Vec<f64> {
        self.windows
            .iter()
            .map(|w| w.angular_error.as_ref().unwrap_or(&w.r2).mean)
            .collect()
    }
}
