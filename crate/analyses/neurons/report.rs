//! The neuron analyses' result: schema `popdecode-neurons/1`, and the weights and activation patterns of a linear
//! decoder fitted on a balanced set of trials.
//!
//! Schema `popdecode-neurons/1` (every face writes exactly this; fields are only ever added):
//! * `schema`, `software` {`name`, `version`}, `file`, `sha256`, `recipe` (as it ran; its `shuffles` are run for
//!   each neuron alone), `classes`, `neurons`, `chance`, `headline` ("accuracy", or "balanced_accuracy" when classes
//!   are not balanced)
//! * `design`: the cross-validation every decoding here used, as in a trial table's report (`split`, `folds`,
//!   `trials_per_repeat`, `headline`)
//! * `dropping`: per population size {`size`, `draws`, `accuracy` and `balanced_accuracy` {`mean`, `sd`}: over the
//!   random subsets drawn, of each subset's mean over cross-validation repeats}
//! * `single`: each neuron alone, best first {`neuron`, `accuracy` and `balanced_accuracy` {`mean`, `sd`: the mean
//!   over cross-validation repeats and the variability over those repeats, not a confidence interval}; with
//!   shuffles, also `p_value` (the neuron's own shuffle p, `(b + 1)/(m + 1)`), `q_value` (Benjamini–Hochberg
//!   adjusted across neurons) and `discovery` (`q_value` ≤ `fdr`)}
//! * `fdr`: the false-discovery rate at which `discovery` is decided (0.05), present with shuffles
//! * `outputs`, `weights`, `patterns` (linear decoders; null otherwise): what each output scores, then
//!   `weights[neuron][output]` and `patterns[neuron][output]`, each output's activation pattern computed on its own
//!   (per output, `a = Σₓ w / Var(wᵀx)`; with more than two classes this is not the joint pattern of all outputs)
//! * `weights_fitted_on` (with weights): the trials the weights were fitted on, in words (a balanced draw when the
//!   recipe balances; pseudo-trials for a pseudo-population)
//! * `patterns_note`, `warnings` (which always include the caution on the top of a ranking, the winner's curse)

use super::plan::{MeanSd, NeuronOutcome, NeuronTask, NeuronsPlan};
use crate::data::Dataset;
use crate::decoders::nearest_mean::MIN_CORRELATION_FEATURES;
use crate::decoders::{
    self, linalg, standardise::Standardiser, FitContext, FittedPipeline, Nesting,
};
use crate::recipe::{Classifier, Recipe};
use crate::report::{Design, Software};
use crate::resample::{balance, pseudo};
use crate::rng::{task_rng, Stream};
use crate::stats::fdr;
use serde::{Deserialize, Serialize};

pub const NEURONS_SCHEMA: &str = "popdecode-neurons/1";

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SizeResult {
    pub size: usize,
    pub draws: usize,
    /// Across draws, of each draw's mean over repeats.
    pub accuracy: MeanSd,
    pub balanced_accuracy: MeanSd,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SingleResult {
    pub neuron: String,
    /// Over repeats.
    pub accuracy: MeanSd,
    pub balanced_accuracy: MeanSd,
    /// With shuffles: the neuron's shuffle p-value, its Benjamini–Hochberg adjusted value across neurons, and
    /// whether that is at most [`FDR`].
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub p_value: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub q_value: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub discovery: Option<bool>,
}

/// The false-discovery rate the single-neuron ranking controls (Benjamini & Hochberg, 1995).
pub const FDR: f64 = 0.05;

/// Every neuron analysis says this beside its ranking.
pub const WINNERS_CURSE: &str = "the top of a single-neuron ranking is biased upwards (the winner's curse): \
     choosing the best neurons by the same scores that rank them favours neurons whose score happened to come out \
     high, so their accuracy on new data is expected to be lower; confirm selected neurons on data not used to \
     select them";

/// Weights and patterns: `values[neuron][output]`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Linear {
    /// What each output scores: a class name, or "B vs A" for the single output of a two-class decoder.
    pub outputs: Vec<String>,
    pub weights: Vec<Vec<f64>>,
    pub patterns: Vec<Vec<f64>>,
    /// Which trials the decoder was fitted on, in words.
    pub fitted_on: String,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct NeuronsReport {
    pub schema: String,
    pub software: Software,
    pub file: String,
    pub sha256: String,
    pub recipe: Recipe,
    pub classes: Vec<String>,
    pub neurons: Vec<String>,
    pub chance: f64,
    /// The split every subset and neuron was decoded with (held out in turn, or folds), said where the result is.
    pub design: Design,
    /// Which score leads ("accuracy", or "balanced_accuracy" when classes are not balanced).
    pub headline: String,
    pub dropping: Vec<SizeResult>,
    pub single: Vec<SingleResult>,
    /// Linear decoders only (else null): what each output scores, then `weights[neuron][output]` and
    /// `patterns[neuron][output]`.
    pub outputs: Option<Vec<String>>,
    pub weights: Option<Vec<Vec<f64>>>,
    pub patterns: Option<Vec<Vec<f64>>>,
    /// With weights: which trials they were fitted on.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub weights_fitted_on: Option<String>,
    pub patterns_note: String,
    pub warnings: Vec<String>,
    /// With shuffles: the false-discovery rate of `single[].discovery`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fdr: Option<f64>,
}

impl NeuronsReport {
    /// Assemble the outcomes (any order) with the weights and patterns of a decoder fitted on every trial.
    pub fn build(plan: &NeuronsPlan, outcomes: &[NeuronOutcome]) -> NeuronsReport {
        let data = &plan.plan.data;
        let dropping = plan
            .sizes
            .iter()
            .map(|&size| {
                let mut draws: Vec<&NeuronOutcome> = outcomes
                    .iter()
                    .filter(|o| matches!(o.task, NeuronTask::Subset { size: s, .. } if s == size))
                    .collect();
                draws.sort_by_key(|o| match o.task {
                    NeuronTask::Subset { draw, .. } => draw,
                    NeuronTask::Single { neuron } => neuron,
                });
                SizeResult {
                    size,
                    draws: draws.len(),
                    accuracy: MeanSd::of(
                        &draws.iter().map(|o| o.accuracy.mean).collect::<Vec<_>>(),
                    ),
                    balanced_accuracy: MeanSd::of(
                        &draws
                            .iter()
                            .map(|o| o.balanced_accuracy.mean)
                            .collect::<Vec<_>>(),
                    ),
                }
            })
            .collect();
        let mut single: Vec<(usize, &NeuronOutcome)> = outcomes
            .iter()
            .filter_map(|o| match o.task {
                NeuronTask::Single { neuron } => Some((neuron, o)),
                NeuronTask::Subset { .. } => None,
            })
            .collect();
        let balanced = plan.recipe.balance;
        let lead = |o: &NeuronOutcome| {
            if balanced {
                o.accuracy.mean
            } else {
                o.balanced_accuracy.mean
            }
        };
        // Best first; ties by neuron order, so the order never depends on the order of outcomes.
        single.sort_by(|a, b| lead(b.1).total_cmp(&lead(a.1)).then(a.0.cmp(&b.0)));
        let p_values: Option<Vec<f64>> = single.iter().map(|(_, o)| o.p_value).collect();
        let q_values = p_values.as_deref().map(fdr::benjamini_hochberg);
        let linear = linear(data, &plan.recipe);
        let mut warnings = plan.plan.scheme.warnings.clone();
        if linear.is_none() && decoders::has_weights(plan.recipe.classifier) {
            warnings.push(
                "the decoder's weights could not be computed on these data (a value is not finite)"
                    .to_string(),
            );
        }
        warnings.push(WINNERS_CURSE.to_string());
        if plan.recipe.classifier == Classifier::NearestMean
            && data.n_features() >= MIN_CORRELATION_FEATURES
        {
            warnings.push(format!(
                "nearest-mean correlates patterns across neurons, which needs at least {MIN_CORRELATION_FEATURES}; \
                 single neurons and subsets of fewer were decoded by the class mean nearest in Euclidean distance \
                 instead, so the first points of the dropping curve and the single-neuron ranking use that rule"
            ));
        }
        NeuronsReport {
            schema: NEURONS_SCHEMA.into(),
            software: Software::current(),
            file: data.source.clone(),
            sha256: data.sha256.clone(),
            recipe: plan.recipe.clone(),
            classes: data.classes.clone(),
            neurons: data.feature_names.clone(),
            chance: 1.0 / data.classes.len() as f64,
            design: Design::of(&plan.plan.scheme),
            headline: if balanced {
                "accuracy"
            } else {
                "balanced_accuracy"
            }
            .into(),
            dropping,
            single: single
                .into_iter()
                .enumerate()
                .map(|(rank, (n, o))| {
                    let q = q_values.as_ref().map(|q| q[rank]);
                    SingleResult {
                        neuron: data.feature_names[n].clone(),
                        accuracy: o.accuracy.clone(),
                        balanced_accuracy: o.balanced_accuracy.clone(),
                        p_value: o.p_value,
                        q_value: q,
                        discovery: q.map(|q| q <= FDR),
                    }
                })
                .collect(),
            outputs: linear.as_ref().map(|l| l.outputs.clone()),
            weights: linear.as_ref().map(|l| l.weights.clone()),
            weights_fitted_on: linear.as_ref().map(|l| l.fitted_on.clone()),
            patterns: linear.map(|l| l.patterns),
            patterns_note: PATTERNS_NOTE.into(),
            warnings,
            fdr: q_values.map(|_| FDR),
        }
    }

    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a report always serialises")
    }
}

/// Shown beside the weights, on every face.
pub const PATTERNS_NOTE: &str = "Weights show how the decoder combines neurons; a neuron with no information of its \
     own can get a large weight when it cancels noise it shares with informative neurons. Activation patterns \
     (Haufe et al., 2014), computed per output, show how each neuron covaries with that output: read these, not \
     the weights, as what a neuron carries. With more than two classes each output's pattern is taken on its \
     own, not jointly with the other outputs.";

/// Weights and activation patterns of the recipe's decoder, for linear decoders; `None` for the others (and when
/// a value would not be finite). The decoder is fitted, with standardisation, on the trials the protocol would
/// train on: a balanced draw when the recipe balances (one draw from the stream (seed, weights, 0, 0); every
/// trial when the classes already have equal sizes), or, for a pseudo-population, pseudo-trials built from every
/// trial (one fold), which hold no missing values.
pub fn linear(data: &Dataset, recipe: &Recipe) -> Option<Linear> {
    if !decoders::has_weights(recipe.classifier) {
        return None;
    }
    let p = data.n_features();
    let x = data.x.as_standard_layout();
    let x = x.as_slice().expect("standard layout");
    let mut rng = task_rng(recipe.seed, Stream::Weights, 0, 0);
    let n_classes = data.classes.len();
    let (rows, y, groups, fitted_on) = if data.pseudo.is_some() {
        let (rows, y, _) = pseudo::build(data, x, &data.y, 1, &mut rng);
        let n = y.len();
        (
            rows,
            y,
            None,
            format!(
                "{n} pseudo-trials ({} per class) built from every trial",
                n / n_classes
            ),
        )
    } else {
        let used: Vec<usize> = if recipe.balance {
            balance(&mut rng, &data.y, n_classes)
        } else {
            (0..data.n_trials()).collect()
        };
        let mut rows = Vec::with_capacity(used.len() * p);
        for &i in &used {
            rows.extend_from_slice(&x[i * p..(i + 1) * p]);
        }
        let y: Vec<usize> = used.iter().map(|&i| data.y[i]).collect();
        let groups: Option<Vec<usize>> = data
            .groups
            .as_ref()
            .map(|g| used.iter().map(|&i| g[i]).collect());
        let what = if recipe.balance && used.len() < data.n_trials() {
            format!(
                "a balanced draw of {} trials ({} per class)",
                used.len(),
                used.len() / n_classes
            )
        } else {
            format!("all {} trials", used.len())
        };
        (rows, y, groups, what)
    };
    let n = y.len();
    let decoder = decoders::build(recipe.classifier, recipe.c, recipe.tune);
    let nesting = Nesting {
        groups: groups.as_deref(),
        ..Nesting::plain(recipe.seed)
    };
    let context = FitContext::of(&nesting, &(0..n).collect::<Vec<_>>(), 0);
    let model = FittedPipeline::fit_with(decoder.as_ref(), &rows, p, &y, n_classes, &context);
    let outputs = model.weights()?;
    // The standardised features the decoder saw: each pattern is their covariance (divisor n) times the weights,
    // formed as Zᵀ(Zw)/n, without the p × p covariance (3.2 GB at 20 000 neurons).
    let mut z = rows.clone();
    Standardiser::fit(&rows, n, p).apply(&mut z);
    let names: Vec<String> = outputs
        .iter()
        .map(|(c, _)| {
            if outputs.len() == 1 {
                let other = (0..data.classes.len()).find(|k| k != c).unwrap_or(0);
                format!("{} vs {}", data.classes[*c], data.classes[other])
            } else {
                data.classes[*c].clone()
            }
        })
        .collect();
    let patterns: Vec<Vec<f64>> = outputs
        .iter()
        .map(|(_, w)| {
            let mut a = vec![0.0; p];
            for row in z.chunks_exact(p) {
                linalg::axpy(linalg::dot(row, w) / n as f64, row, &mut a);
            }
            let var = linalg::dot(w, &a);
            a.iter()
                .map(|v| if var > 0.0 { v / var } else { 0.0 })
                .collect()
        })
        .collect();
    let by_neuron = |m: &[Vec<f64>]| -> Vec<Vec<f64>> {
        (0..p).map(|j| m.iter().map(|o| o[j]).collect()).collect()
    };
    let weights: Vec<Vec<f64>> = outputs.into_iter().map(|(_, w)| w).collect();
    let finite = |m: &[Vec<f64>]| m.iter().flatten().all(|v| v.is_finite());
    if !finite(&weights) || !finite(&patterns) {
        return None;
    }
    Some(Linear {
        outputs: names,
        weights: by_neuron(&weights),
        patterns: by_neuron(&patterns),
        fitted_on,
    })
}
