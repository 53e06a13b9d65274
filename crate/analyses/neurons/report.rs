//! The neuron analyses' result: schema `popdecode-neurons/1`, and the weights and activation patterns of a linear
//! decoder fitted on every trial.

use super::plan::{MeanSd, NeuronOutcome, NeuronTask, NeuronsPlan};
use crate::data::Dataset;
use crate::decoders::nearest_mean::MIN_CORRELATION_FEATURES;
use crate::decoders::{self, linalg, standardise::Standardiser, FittedPipeline};
use crate::recipe::{Classifier, Recipe};
use crate::report::Software;
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
}

/// Weights and patterns: `values[neuron][output]`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Linear {
    /// What each output scores: a class name, or "B vs A" for the single output of a two-class decoder.
    pub outputs: Vec<String>,
    pub weights: Vec<Vec<f64>>,
    pub patterns: Vec<Vec<f64>>,
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
    /// Which score leads ("accuracy", or "balanced_accuracy" when classes are not balanced).
    pub headline: String,
    pub dropping: Vec<SizeResult>,
    pub single: Vec<SingleResult>,
    /// Linear decoders only (else null): what each output scores, then `weights[neuron][output]` and
    /// `patterns[neuron][output]`.
    pub outputs: Option<Vec<String>>,
    pub weights: Option<Vec<Vec<f64>>>,
    pub patterns: Option<Vec<Vec<f64>>>,
    pub patterns_note: String,
    pub warnings: Vec<String>,
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
        let linear = linear(data, &plan.recipe);
        let mut warnings = plan.plan.scheme.warnings.clone();
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
            headline: if balanced {
                "accuracy"
            } else {
                "balanced_accuracy"
            }
            .into(),
            dropping,
            single: single
                .into_iter()
                .map(|(n, o)| SingleResult {
                    neuron: data.feature_names[n].clone(),
                    accuracy: o.accuracy.clone(),
                    balanced_accuracy: o.balanced_accuracy.clone(),
                })
                .collect(),
            outputs: linear.as_ref().map(|l| l.outputs.clone()),
            weights: linear.as_ref().map(|l| l.weights.clone()),
            patterns: linear.map(|l| l.patterns),
            patterns_note: PATTERNS_NOTE.into(),
            warnings,
        }
    }

    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a report always serialises")
    }
}

/// Shown beside the weights, on every face.
pub const PATTERNS_NOTE: &str = "Weights show how the decoder combines neurons; a neuron with no information of its \
     own can get a large weight when it cancels noise it shares with informative neurons. Activation patterns \
     (Haufe et al., 2014) show how each neuron covaries with the decoder's output: read these, not the weights, as \
     what a neuron carries.";

/// Weights and activation patterns of the recipe's decoder fitted on every trial (standardised), for linear
/// decoders; `None` for the others.
pub fn linear(data: &Dataset, recipe: &Recipe) -> Option<Linear> {
    let (n, p) = (data.n_trials(), data.n_features());
    let x = data.x.as_standard_layout();
    let x = x.as_slice().expect("standard layout");
    let decoder = decoders::build(recipe.classifier, recipe.c, recipe.tune);
    let model = FittedPipeline::fit(decoder.as_ref(), x, p, &data.y, data.classes.len());
    let outputs = model.weights()?;
    // The covariance (divisor n) of the standardised features the decoder saw.
    let mut z = x.to_vec();
    Standardiser::fit(x, n, p).apply(&mut z);
    let cov = linalg::gram(&z, n, p);
    let cov: Vec<f64> = cov.iter().map(|v| v / n as f64).collect();
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
            let a: Vec<f64> = (0..p)
                .map(|i| linalg::dot(&cov[i * p..(i + 1) * p], w))
                .collect();
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
    Some(Linear {
        outputs: names,
        weights: by_neuron(&weights),
        patterns: by_neuron(&patterns),
    })
}
