//! The result of a trial-table analysis: a stable JSON schema.
//!
//! Schema `popdecode-result/1` (every face writes exactly this; fields are only ever added):
//! * `schema`, `software` {`name`, `version`}
//! * `input` {`file`, `sha256`, `delimiter`, `decimal_comma`, `trials`, `dropped_lines`, `label_column`,
//!   `group_column`, `groups`, `features`, `skipped_columns`}
//! * `recipe`: the recipe as it ran, as a recipe file holds it (`repeats` is 1 when every repeat would split the
//!   trials alike; `pairwise` present when true)
//! * `classes` (the order of every per-class array and of the confusion matrix), `class_counts`
//! * `design` {`split`, `folds`, `trials_per_repeat`, `headline`}
//! * `chance` {`level`, `threshold`, `alpha`, `test_trials`}
//! * `repeats`: per observed repeat {`index`, `accuracy`, `balanced_accuracy`, `confusion` (counts)}
//! * `summary`:
//!   - `accuracy`, `balanced_accuracy`, each {`mean` over cross-validation repeats; `sd`, `p2_5`, `p97_5`: the
//!     variability over those repeats (SD and 2.5th/97.5th percentiles), which reflects how the trials were
//!     split and is not a confidence interval; `ci`: [low, high], the 95 % confidence interval of the mean;
//!     `ci_method`: how it was computed (at each end, the wider of a Wilson interval on the test trials of a
//!     repeat and the corrected resampled t over the fold scores of every repeat, [`crate::stats::intervals`])}
//!   - `confusion` (rows = true class, each row normalised to sum 1, averaged over repeats), `recall` (per class)
//!   - `effect_size` {`score` ("accuracy" or "balanced_accuracy", the headline), `above_chance` (mean − chance),
//!     `above_chance_ci` (the headline's `ci` minus chance),
//!     `kappa` ((mean − chance)/(1 − chance): 0 at chance, 1 perfect; Cohen's κ for balanced test sets),
//!     `kappa_ci` (the headline's `ci` on that scale)}
//!   - two classes only: `auc` {`mean`, `sd`, `p2_5`, `p97_5` over repeats} of the area under the ROC curve, and
//!     `auc_pooling` (how a repeat's AUC is computed: the decision values of all its test folds pooled into one
//!     curve, the second class positive)
//! * `shuffle` {`count`, `repeats_each`, `within_groups`, `observed`, `null` (one headline score per shuffle),
//!   `null_mean`, `null_sd`, `null_p95`, `p_value`}; the statistics are null when there are no shuffles; with
//!   shuffles also `recall_p_values` (per class, `(b + 1)/(m + 1)` against the same shuffles' recall of that class;
//!   not corrected across classes) and `recall_null` (per shuffle, per class, the mean recall over its repeats). A
//!   `p_value` equal to 1/(m + 1) means no shuffle reached the observed score: p is at most that
//! * `fits` {`total`, `capped`, `single_class`}, `warnings` (the design's cautions, such as leave-one-out's, and
//!   what went wrong in fits)
//! * `tuning` (only with nested selection): {`grid`, `chosen` [{`c`, `gamma_factor` (kernel SVM only), `fits`}]},
//!   how often each setting was chosen across the folds of the observed repeats
//! * `pairwise` (only with pairwise decoding of three or more classes): {`pairs` (per pair of classes, in the order
//!   (0, 1), (0, 2), …, (1, 2), … of `classes`: {`classes` (the two names), `headline`, `accuracy`,
//!   `balanced_accuracy` (as in `summary`, with `ci`), `auc` (as in `summary`), `p_value`, `q_value`
//!   (Benjamini–Hochberg adjusted across pairs), `discovery` (`q_value` ≤ `fdr`); the last three null without
//!   shuffles}), `matrix` (classes × classes, the headline mean of each pair, symmetric, null on the diagonal),
//!   `fdr` (0.05; absent without shuffles), `fits` (every pair's fits together)}. Each pair is the analysis of the
//!   trials of its two classes alone, with the same recipe
//!
//! Nothing time- or machine-dependent is written, so equal recipes and files give byte-identical JSON.

use super::plan::{Outcome, Plan};
use crate::recipe::Recipe;
use crate::report::{by_task, ungrouped_inner_warning, Chance, Design, Fits, Software, Tuning};
use crate::resample::Headline;
use crate::stats::{self, fdr, Spread};
use serde::{Deserialize, Serialize};

pub const RESULT_SCHEMA: &str = "popdecode-result/1";

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Report {
    pub schema: String,
    pub software: Software,
    pub input: Input,
    pub recipe: Recipe,
    pub classes: Vec<String>,
    pub class_counts: Vec<usize>,
    pub design: Design,
    pub chance: Chance,
    pub repeats: Vec<RepeatRecord>,
    pub summary: Summary,
    pub shuffle: Shuffle,
    pub fits: Fits,
    pub warnings: Vec<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tuning: Option<Tuning>,
    /// With pairwise decoding: every pair of classes decoded on its own.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pairwise: Option<Pairwise>,
}

/// Every pair of classes decoded on its own with the same protocol.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Pairwise {
    /// Per pair, in the order (0, 1), (0, 2), …, (1, 2), … of `classes`.
    pub pairs: Vec<PairResult>,
    /// `matrix[a][b]`: the headline mean of the pair of classes a and b (symmetric); null on the diagonal.
    pub matrix: Vec<Vec<Option<f64>>>,
    /// With shuffles: the false-discovery rate at which `discovery` is decided across pairs.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fdr: Option<f64>,
    /// Fits of every pair's analysis together.
    pub fits: Fits,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PairResult {
    /// The two class names.
    pub classes: [String; 2],
    /// The score that leads for this pair (balanced accuracy when its classes are unbalanced and balancing is off).
    pub headline: Headline,
    pub accuracy: Spread,
    pub balanced_accuracy: Spread,
    /// The area under the ROC curve over repeats ([`AUC_POOLING`]).
    pub auc: Option<Spread>,
    /// With shuffles: the pair's own shuffle p-value, its Benjamini–Hochberg adjusted value across pairs, and
    /// whether that is at most `fdr`.
    pub p_value: Option<f64>,
    pub q_value: Option<f64>,
    pub discovery: Option<bool>,
}

/// The false-discovery rate controlled across pairs (Benjamini & Hochberg, 1995).
pub const PAIRWISE_FDR: f64 = 0.05;

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Input {
    pub file: String,
    pub sha256: String,
    pub delimiter: String,
    pub decimal_comma: bool,
    /// Trials used (after dropping those with missing values).
    pub trials: usize,
    pub dropped_lines: Vec<u64>,
    pub label_column: String,
    pub group_column: Option<String>,
    pub groups: Vec<String>,
    pub features: Vec<String>,
    pub skipped_columns: Vec<String>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RepeatRecord {
    pub index: usize,
    pub accuracy: f64,
    pub balanced_accuracy: f64,
    pub confusion: Vec<Vec<u32>>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Summary {
    pub accuracy: Spread,
    pub balanced_accuracy: Spread,
    pub confusion: Vec<Vec<f64>>,
    pub recall: Vec<f64>,
    /// The headline score above chance.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub effect_size: Option<EffectSize>,
    /// Two classes only: the area under the ROC curve over repeats, and how each repeat's was computed.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub auc: Option<Spread>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub auc_pooling: Option<String>,
}

/// The headline score above chance, as a difference and chance-corrected.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EffectSize {
    /// Which score: "accuracy" or "balanced_accuracy".
    pub score: Headline,
    /// Mean score − chance level.
    pub above_chance: f64,
    /// The score's confidence interval minus chance: the interval of `above_chance`.
    pub above_chance_ci: [f64; 2],
    /// (score − chance)/(1 − chance): 0 at chance, 1 for perfect decoding; Cohen's κ (Cohen, 1960) for balanced
    /// test sets.
    pub kappa: f64,
    /// The score's confidence interval on the same scale.
    pub kappa_ci: [f64; 2],
}

/// How the AUC of a repeat pools its folds (the JSON's `summary.auc_pooling`).
pub const AUC_POOLING: &str =
    "decision values of every test fold of a repeat pooled into one ROC curve, the \
     second class positive; mean over repeats";

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Shuffle {
    pub count: usize,
    pub repeats_each: usize,
    pub within_groups: bool,
    /// The observed headline score the null is compared with (mean over observed repeats).
    pub observed: f64,
    pub null: Vec<f64>,
    pub null_mean: Option<f64>,
    pub null_sd: Option<f64>,
    pub null_p95: Option<f64>,
    pub p_value: Option<f64>,
    /// Per class: the shuffle p-value of its recall, `(b + 1)/(m + 1)` with b the shuffles whose mean recall of that
    /// class reached the observed one (one test per class, not corrected across classes); null without shuffles.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub recall_p_values: Option<Vec<f64>>,
    /// Per shuffle, the mean recall of each class over its repeats.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub recall_null: Vec<Vec<f64>>,
}

impl Report {
    /// Assemble the report from every task's outcome (any order; they are sorted by task here).
    pub fn build(plan: &Plan, all_outcomes: &[Outcome]) -> Report {
        let data = &plan.data;
        let n_classes = data.classes.len();
        let outcomes: Vec<Outcome> = all_outcomes
            .iter()
            .filter(|o| o.pair.is_none())
            .cloned()
            .collect();
        let outcomes = &outcomes[..];
        let (repeats, shuffles) = by_task(outcomes, |o| o.task);

        let acc: Vec<f64> = repeats.iter().map(|o| o.accuracy).collect();
        let bacc: Vec<f64> = repeats.iter().map(|o| o.balanced_accuracy).collect();
        let mut confusion = vec![vec![0.0; n_classes]; n_classes];
        for o in &repeats {
            for (t, row) in o.confusion.iter().enumerate() {
                let total: u32 = row.iter().sum();
                if total > 0 {
                    for (p, &c) in row.iter().enumerate() {
                        confusion[t][p] += c as f64 / total as f64;
                    }
                }
            }
        }
        for row in &mut confusion {
            for v in row.iter_mut() {
                *v /= repeats.len() as f64;
            }
        }
        let recall: Vec<f64> = (0..n_classes).map(|c| confusion[c][c]).collect();

        let observed = stats::mean(
            &repeats
                .iter()
                .map(|o| plan.headline_score(o))
                .collect::<Vec<_>>(),
        );
        let null: Vec<f64> = shuffles.iter().map(|o| plan.headline_score(o)).collect();
        let some = |v: f64| (!null.is_empty()).then_some(v);
        let recall_null: Vec<Vec<f64>> = shuffles.iter().map(|o| o.recall.clone()).collect();
        let recall_p_values = (!null.is_empty()).then(|| {
            (0..n_classes)
                .map(|c| {
                    let at: Vec<f64> = recall_null.iter().map(|r| r[c]).collect();
                    stats::permutation_p(recall[c], &at)
                })
                .collect()
        });
        let shuffle = Shuffle {
            count: null.len(),
            repeats_each: if null.is_empty() {
                0
            } else {
                plan.recipe.shuffle_repeats()
            },
            within_groups: data.groups.is_some(),
            observed,
            null_mean: some(stats::mean(&null)),
            null_sd: some(stats::sd(&null)),
            null_p95: some(stats::percentile(&null, 95.0)),
            p_value: some(stats::permutation_p(observed, &null)),
            null,
            recall_p_values,
            recall_null,
        };

        let fits = Fits::sum(
            outcomes
                .iter()
                .map(|o| (o.fits, o.capped_fits, o.single_class_fits)),
        );
        let mut warnings = fits.with_warnings(&plan.scheme.warnings);
        let ungrouped: u64 = outcomes.iter().map(|o| u64::from(o.ungrouped_inner)).sum();
        if ungrouped > 0 {
            warnings.push(ungrouped_inner_warning(ungrouped, fits.total));
        }
        // As every other analysis says it (found by a review of the page: decoding classes alone did not).
        let m = plan.recipe.shuffles;
        if m > 0 && m < 100 {
            warnings.push(format!(
                "only {m} shuffles: p-values cannot go below {}; 200 or more are usual",
                crate::report::text::floor_words(m)
            ));
        }
        let (accuracy, balanced_accuracy) = intervals(plan, &repeats, &acc, &bacc);
        let headline = match plan.scheme.headline {
            Headline::Accuracy => &accuracy,
            Headline::BalancedAccuracy => &balanced_accuracy,
        };
        let chance = 1.0 / n_classes as f64;
        let kappa = |v: f64| (v - chance) / (1.0 - chance);
        let effect_size = headline.ci.map(|[lo, hi]| EffectSize {
            score: plan.scheme.headline,
            above_chance: headline.mean - chance,
            above_chance_ci: [lo - chance, hi - chance],
            kappa: kappa(headline.mean),
            kappa_ci: [kappa(lo), kappa(hi)],
        });
        let pairwise =
            (!plan.pairs.is_empty()).then(|| pairwise(plan, all_outcomes, &mut warnings));
        let aucs: Vec<f64> = repeats.iter().filter_map(|o| o.auc).collect();
        let auc = (!aucs.is_empty()).then(|| Spread::of(&aucs));
        Report {
            schema: RESULT_SCHEMA.into(),
            software: Software::current(),
            input: Input {
                file: data.source.clone(),
                sha256: data.sha256.clone(),
                delimiter: data.delimiter.clone(),
                decimal_comma: data.decimal_comma,
                trials: data.n_trials(),
                dropped_lines: data.dropped_lines.clone(),
                label_column: data.label_column.clone(),
                group_column: data.group_column.clone(),
                groups: data.group_names.clone(),
                features: data.feature_names.clone(),
                skipped_columns: data.skipped_columns.clone(),
            },
            recipe: plan.recipe.clone(),
            classes: data.classes.clone(),
            class_counts: data.class_counts(),
            design: Design::of(&plan.scheme),
            chance: Chance::of(&plan.scheme, n_classes),
            repeats: repeats
                .iter()
                .map(|o| RepeatRecord {
                    index: o.task.index(),
                    accuracy: o.accuracy,
                    balanced_accuracy: o.balanced_accuracy,
                    confusion: o.confusion.clone(),
                })
                .collect(),
            summary: Summary {
                accuracy,
                balanced_accuracy,
                confusion,
                recall,
                effect_size,
                auc_pooling: auc.as_ref().map(|_| AUC_POOLING.to_string()),
                auc,
            },
            shuffle,
            fits,
            warnings,
            tuning: Tuning::of(&plan.recipe, repeats.iter().flat_map(|o| &o.chosen)),
            pairwise,
        }
    }

    /// The headline score's spread across repeats.
    pub fn headline(&self) -> &Spread {
        match self.design.headline {
            Headline::Accuracy => &self.summary.accuracy,
            Headline::BalancedAccuracy => &self.summary.balanced_accuracy,
        }
    }

    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a report always serialises")
    }
}

/// Accuracy and balanced accuracy over repeats, each with its confidence interval
/// ([`crate::stats::intervals::score_interval`]) from the fold scores of every observed repeat. The Wilson part
/// counts the test trials of a repeat (every trial is tested once per repeat); for balanced accuracy, the effective
/// count `K²/Σ 1/n_c` of the K classes' test trials n_c.
fn intervals(plan: &Plan, repeats: &[&Outcome], acc: &[f64], bacc: &[f64]) -> (Spread, Spread) {
    let folds = plan.scheme.folds().max(2);
    let test_over_train = 1.0 / (folds - 1) as f64;
    let per_class: Vec<f64> = repeats
        .first()
        .map(|o| {
            o.confusion
                .iter()
                .map(|row| row.iter().sum::<u32>() as f64)
                .collect()
        })
        .unwrap_or_default();
    let n_test: f64 = per_class.iter().sum();
    let present: Vec<f64> = per_class.into_iter().filter(|&n| n > 0.0).collect();
    let k = present.len() as f64;
    let n_balanced = k * k / present.iter().map(|n| 1.0 / n).sum::<f64>();
    let gather = |f: fn(&Outcome) -> &Vec<f64>| -> Vec<f64> {
        repeats.iter().flat_map(|o| f(o).iter().copied()).collect()
    };
    (
        Spread::with_interval(acc, &gather(|o| &o.fold_accuracy), test_over_train, n_test),
        Spread::with_interval(
            bacc,
            &gather(|o| &o.fold_balanced_accuracy),
            test_over_train,
            n_balanced,
        ),
    )
}

/// Every pair's summary, from its own report of the outcomes of its tasks, with p-values adjusted across pairs;
/// the pairs' fit warnings go to `warnings`, each naming its pair.
fn pairwise(plan: &Plan, outcomes: &[Outcome], warnings: &mut Vec<String>) -> Pairwise {
    let k = plan.data.classes.len();
    let mut matrix = vec![vec![None; k]; k];
    let mut fits = Vec::new();
    let mut pairs: Vec<PairResult> = plan
        .pairs
        .iter()
        .enumerate()
        .map(|(i, pair)| {
            let own: Vec<Outcome> = outcomes
                .iter()
                .filter(|o| o.pair == Some(i))
                .map(|o| Outcome {
                    pair: None,
                    ..o.clone()
                })
                .collect();
            let r = Report::build(&pair.plan, &own);
            let [a, b] = pair.classes;
            let names = [plan.data.classes[a].clone(), plan.data.classes[b].clone()];
            for w in r.fits.warnings() {
                warnings.push(format!("pair '{}' vs '{}': {w}", names[0], names[1]));
            }
            fits.push((r.fits.total, r.fits.capped, r.fits.single_class));
            let mean = r.headline().mean;
            matrix[a][b] = Some(mean);
            matrix[b][a] = Some(mean);
            PairResult {
                classes: names,
                headline: r.design.headline,
                accuracy: r.summary.accuracy,
                balanced_accuracy: r.summary.balanced_accuracy,
                auc: r.summary.auc,
                p_value: r.shuffle.p_value,
                q_value: None,
                discovery: None,
            }
        })
        .collect();
    let p: Option<Vec<f64>> = pairs.iter().map(|r| r.p_value).collect();
    let fdr = p.map(|p| {
        for (r, q) in pairs.iter_mut().zip(fdr::benjamini_hochberg(&p)) {
            r.q_value = Some(q);
            r.discovery = Some(q <= PAIRWISE_FDR);
        }
        PAIRWISE_FDR
    });
    let mut total = Fits::sum(std::iter::empty());
    for (t, c, s) in fits {
        total.total += t;
        total.capped += c;
        total.single_class += s;
    }
    Pairwise {
        pairs,
        matrix,
        fdr,
        fits: total,
    }
}
