//! What each neuron contributes: decoding from random subsets of growing size (the neuron-dropping curve), from
//! each neuron alone, and, for linear decoders, the weights and the activation patterns of the decoder.
//!
//! Every subset and every single neuron runs the full protocol (balancing, folds, train-fold standardisation) with
//! the recipe's repeats and no shuffles. Repeat i draws the same balancing and folds for every subset (the streams
//! depend on the repeat only), so differences between subsets are differences between neurons, not between splits.
//! Subset draw d of size s comes from its own stream (seed, subset, s, d).
//!
//! Weights say how the decoder combines neurons, and a neuron that carries no information can get a large weight
//! when it helps cancel noise shared with informative neurons; the activation pattern of an output,
//! `a = Σₓ w / Var(wᵀx)` (Haufe et al., 2014, for one output at a time), is the covariance between each neuron and
//! the decoder's output, and is the one that may be read as "what the neuron carries".

pub mod plots;

use crate::data::Dataset;
use crate::decoders::FittedPipeline;
use crate::error::{Error, Result};
use crate::protocol::{Plan, Task};
use crate::recipe::Recipe;
use crate::report::Software;
use crate::rng::{shuffle, task_rng, Stream};
use crate::stats;
use serde::{Deserialize, Serialize};

pub const NEURONS_SCHEMA: &str = "popdecode-neurons/1";

/// One independent piece of work.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum NeuronTask {
    /// Draw `draw` of a random subset of `size` neurons.
    Subset { size: usize, draw: usize },
    /// Neuron `neuron` alone.
    Single { neuron: usize },
}

/// Mean scores over the recipe's repeats for one subset or neuron.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct NeuronOutcome {
    pub task: NeuronTask,
    /// Mean and SD over the recipe's repeats.
    pub accuracy: MeanSd,
    pub balanced_accuracy: MeanSd,
}

/// Mean and SD (n − 1) of a score.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MeanSd {
    pub mean: f64,
    pub sd: f64,
}

impl MeanSd {
    fn of(v: &[f64]) -> MeanSd {
        MeanSd {
            mean: stats::mean(v),
            sd: stats::sd(v),
        }
    }
}

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

/// Sizes of the dropping curve: 1, 2, 4, … (doubling) below the population size, then the whole population.
pub fn sizes(p: usize) -> Vec<usize> {
    let mut out: Vec<usize> = std::iter::successors(Some(1usize), |s| Some(s * 2))
        .take_while(|&s| s < p)
        .collect();
    out.push(p);
    out
}

/// The neuron analyses of a recipe on a dataset.
pub struct NeuronsPlan<'a> {
    pub data: &'a Dataset,
    pub recipe: Recipe,
    /// Random subsets drawn per size (the whole population is drawn once).
    pub draws: usize,
    pub sizes: Vec<usize>,
    pub plan: Plan<'a>,
}

impl<'a> NeuronsPlan<'a> {
    pub fn new(data: &'a Dataset, recipe: &Recipe, draws: usize) -> Result<NeuronsPlan<'a>> {
        if draws == 0 {
            return Err(Error::Recipe("draws per size must be at least 1".into()));
        }
        let mut recipe = recipe.clone();
        recipe.shuffles = 0;
        let plan = Plan::new(data, &recipe)?;
        Ok(NeuronsPlan {
            data,
            sizes: sizes(data.n_features()),
            recipe,
            draws,
            plan,
        })
    }

    pub fn tasks(&self) -> Vec<NeuronTask> {
        let p = self.data.n_features();
        let subsets = self.sizes.iter().flat_map(|&size| {
            let draws = if size == p { 1 } else { self.draws };
            (0..draws).map(move |draw| NeuronTask::Subset { size, draw })
        });
        subsets
            .chain((0..p).map(|neuron| NeuronTask::Single { neuron }))
            .collect()
    }

    /// Fits a task performs: repeats × folds.
    pub fn fits_in(&self, _task: NeuronTask) -> usize {
        self.recipe.repeats * self.plan.scheme.folds()
    }

    pub fn run(&self, task: NeuronTask) -> NeuronOutcome {
        let p = self.data.n_features();
        let cols: Vec<usize> = match task {
            NeuronTask::Subset { size, draw } => {
                let mut all: Vec<usize> = (0..p).collect();
                shuffle(
                    &mut task_rng(self.recipe.seed, Stream::Subset, size as u64, draw as u64),
                    &mut all,
                );
                let mut chosen = all[..size].to_vec();
                chosen.sort_unstable();
                chosen
            }
            NeuronTask::Single { neuron } => vec![neuron],
        };
        let sub = self.data.with_features(&cols);
        let plan = Plan::new(&sub, &self.recipe).expect("a subset of a valid dataset is valid");
        let outcomes: Vec<_> = (0..self.recipe.repeats)
            .map(|i| plan.run(Task::Repeat(i)))
            .collect();
        NeuronOutcome {
            task,
            accuracy: MeanSd::of(&outcomes.iter().map(|o| o.accuracy).collect::<Vec<_>>()),
            balanced_accuracy: MeanSd::of(
                &outcomes
                    .iter()
                    .map(|o| o.balanced_accuracy)
                    .collect::<Vec<_>>(),
            ),
        }
    }

    /// Assemble the outcomes (any order) with the weights and patterns of a decoder fitted on every trial.
    pub fn report(&self, outcomes: &[NeuronOutcome]) -> NeuronsReport {
        let data = self.data;
        let dropping = self
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
        let balanced = self.recipe.balance;
        let lead = |o: &NeuronOutcome| {
            if balanced {
                o.accuracy.mean
            } else {
                o.balanced_accuracy.mean
            }
        };
        // Best first; ties by neuron order, so the order never depends on the order of outcomes.
        single.sort_by(|a, b| lead(b.1).total_cmp(&lead(a.1)).then(a.0.cmp(&b.0)));
        let linear = linear(data, &self.recipe);
        NeuronsReport {
            schema: NEURONS_SCHEMA.into(),
            software: Software::current(),
            file: data.source.clone(),
            sha256: data.sha256.clone(),
            recipe: self.recipe.clone(),
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
            warnings: self.plan.scheme.warnings.clone(),
        }
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
    let decoder = recipe.classifier.build_tuned(recipe.c, recipe.tune);
    let model = FittedPipeline::fit(decoder.as_ref(), x, p, &data.y, data.classes.len());
    let outputs = model.weights()?;
    // The covariance (divisor n) of the standardised features the decoder saw.
    let mut z = x.to_vec();
    crate::decoders::standardise::Standardiser::fit(x, n, p).apply(&mut z);
    let cov = crate::decoders::linalg::gram(&z, n, p);
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
                .map(|i| crate::decoders::linalg::dot(&cov[i * p..(i + 1) * p], w))
                .collect();
            let var = crate::decoders::linalg::dot(w, &a);
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

/// Run every task one after the other.
pub fn run_all(plan: &NeuronsPlan) -> NeuronsReport {
    let outcomes: Vec<NeuronOutcome> = plan.tasks().into_iter().map(|t| plan.run(t)).collect();
    plan.report(&outcomes)
}

impl NeuronsReport {
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a report always serialises")
    }

    /// The tables printed by the CLI.
    pub fn render(&self) -> String {
        use std::fmt::Write;
        let pct = crate::report::text::pct;
        let lead = |a: &'_ MeanSd, b: &'_ MeanSd| -> MeanSd {
            if self.headline == "accuracy" {
                a.clone()
            } else {
                b.clone()
            }
        };
        let mut out = String::new();
        let score = self.headline.replace('_', " ");
        writeln!(
            out,
            "Neuron-dropping curve ({score}, mean ± SD over random subsets; chance {}):",
            pct(self.chance)
        )
        .unwrap();
        for d in &self.dropping {
            let s = if self.headline == "accuracy" {
                &d.accuracy
            } else {
                &d.balanced_accuracy
            };
            writeln!(
                out,
                "  {:>5} neurons  {:>8} ± {:<8} ({} draw{})",
                d.size,
                pct(s.mean),
                pct(s.sd),
                d.draws,
                if d.draws == 1 { "" } else { "s" }
            )
            .unwrap();
        }
        writeln!(out, "\nEach neuron alone ({score}, best first):").unwrap();
        for s in &self.single {
            let m = lead(&s.accuracy, &s.balanced_accuracy);
            writeln!(out, "  {:<24} {:>8} ± {}", s.neuron, pct(m.mean), pct(m.sd)).unwrap();
        }
        if let (Some(outputs), Some(weights), Some(patterns)) =
            (&self.outputs, &self.weights, &self.patterns)
        {
            writeln!(
                out,
                "\nWeights and activation patterns ({}):",
                outputs.join(", ")
            )
            .unwrap();
            for (j, name) in self.neurons.iter().enumerate() {
                let cells: Vec<String> = weights[j]
                    .iter()
                    .zip(&patterns[j])
                    .map(|(w, a)| format!("{w:>9.3} {a:>9.3}"))
                    .collect();
                writeln!(out, "  {:<24} {}", name, cells.join("  ")).unwrap();
            }
            writeln!(
                out,
                "  (per output: weight, pattern)\n\n{}",
                self.patterns_note
            )
            .unwrap();
        }
        for w in &self.warnings {
            writeln!(out, "\nnote: {w}").unwrap();
        }
        out
    }
}
