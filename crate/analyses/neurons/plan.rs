//! The neuron analyses' plan: random subsets of growing size and each neuron alone, each a task.

use crate::analyses::trial_table::Plan;
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::recipe::Recipe;
use crate::resample::Task;
use crate::rng::{shuffle, task_rng, Stream};
use crate::stats;
use serde::{Deserialize, Serialize};

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
    pub fn of(v: &[f64]) -> MeanSd {
        MeanSd {
            mean: stats::mean(v),
            sd: stats::sd(v),
        }
    }
}

/// Sizes of the dropping curve: 1, 2, 4, … (doubling) below the population size, then the whole population.
pub fn sizes(p: usize) -> Vec<usize> {
    let mut out: Vec<usize> = std::iter::successors(Some(1usize), |s| Some(s * 2))
        .take_while(|&s| s < p)
        .collect();
    out.push(p);
    out
}

/// Draw `draw` of a random subset of `size` of the `p` neurons, sorted: the first `size` of a shuffle from the
/// stream (seed, subset, size, draw). The dropping curve and the power analysis's neurons axis draw the same subsets.
pub fn subset(seed: u64, p: usize, size: usize, draw: usize) -> Vec<usize> {
    let mut all: Vec<usize> = (0..p).collect();
    shuffle(
        &mut task_rng(seed, Stream::Subset, size as u64, draw as u64),
        &mut all,
    );
    let mut chosen = all[..size].to_vec();
    chosen.sort_unstable();
    chosen
}

/// The neuron analyses of a recipe on a dataset.
pub struct NeuronsPlan {
    pub recipe: Recipe,
    /// Random subsets drawn per size (the whole population is drawn once).
    pub draws: usize,
    pub sizes: Vec<usize>,
    /// The trial-table plan of the whole population (without shuffles); it owns the data.
    pub plan: Plan,
}

impl NeuronsPlan {
    pub fn new(data: Dataset, recipe: &Recipe, draws: usize) -> Result<NeuronsPlan> {
        if draws == 0 {
            return Err(Error::Recipe("draws per size must be at least 1".into()));
        }
        let mut recipe = recipe.clone();
        recipe.shuffles = 0;
        let p = data.n_features();
        let plan = Plan::new(data, &recipe)?;
        Ok(NeuronsPlan {
            sizes: sizes(p),
            recipe,
            draws,
            plan,
        })
    }

    pub fn tasks(&self) -> Vec<NeuronTask> {
        let p = self.plan.data.n_features();
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
        let p = self.plan.data.n_features();
        let cols: Vec<usize> = match task {
            NeuronTask::Subset { size, draw } => subset(self.recipe.seed, p, size, draw),
            NeuronTask::Single { neuron } => vec![neuron],
        };
        let sub = self.plan.data.with_features(&cols);
        let plan = Plan::new(sub, &self.recipe).expect("a subset of a valid dataset is valid");
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
}
