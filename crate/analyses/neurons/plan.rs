//! The neuron analyses' plan: random subsets of growing size and each neuron alone, each a task.

use crate::analyses::trial_table::Plan;
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::recipe::{limits, Recipe};
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
    /// A single neuron with shuffles asked: the shuffle p-value of its headline score.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub p_value: Option<f64>,
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
    /// The recipe as it runs; its shuffles are run for each neuron alone (none for the subsets).
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
        limits::check_count("draws per size", draws)?;
        // Pairs of classes are an analysis of the trial table, not of its neurons.
        let mut recipe = recipe.clone();
        recipe.pairwise = false;
        let recipe = &recipe;
        let mut without_shuffles = recipe.clone();
        without_shuffles.shuffles = 0;
        let p = data.n_features();
        let plan = Plan::new(data, &without_shuffles)?;
        // As the plan runs it (one repeat when every repeat would split alike), with the shuffles asked.
        let recipe = plan.scheme.repeats_to_run(recipe);
        // Each task runs every repeat; each outcome keeps two means and two SDs.
        let tasks = (sizes(p).len() * draws + p) as f64;
        limits::check_work(
            recipe.repeats as f64 * plan.scheme.folds() as f64,
            tasks * 4.0,
        )?;
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

    /// Fits a task performs: repeats × folds, and for a single neuron its shuffles' repeats × folds.
    pub fn fits_in(&self, task: NeuronTask) -> usize {
        let folds = self.plan.scheme.folds();
        let shuffles = match task {
            NeuronTask::Single { .. } => self.recipe.shuffles * self.recipe.shuffle_repeats(),
            NeuronTask::Subset { .. } => 0,
        };
        (self.recipe.repeats + shuffles) * folds
    }

    pub fn run(&self, task: NeuronTask) -> NeuronOutcome {
        let p = self.plan.data.n_features();
        let cols: Vec<usize> = match task {
            NeuronTask::Subset { size, draw } => subset(self.recipe.seed, p, size, draw),
            NeuronTask::Single { neuron } => vec![neuron],
        };
        let sub = self.plan.data.with_features(&cols);
        // Shuffles only for a neuron alone: its p-value, controlled across neurons by the report.
        let recipe = match task {
            NeuronTask::Single { .. } => self.recipe.clone(),
            NeuronTask::Subset { .. } => self.plan.recipe.clone(),
        };
        let plan = Plan::new(sub, &recipe).expect("a subset of a valid dataset is valid");
        let outcomes: Vec<_> = (0..plan.recipe.repeats)
            .map(|i| plan.run(Task::Repeat(i)))
            .collect();
        let p_value = (plan.recipe.shuffles > 0).then(|| {
            let observed: Vec<f64> = outcomes.iter().map(|o| plan.headline_score(o)).collect();
            let null: Vec<f64> = (0..plan.recipe.shuffles)
                .map(|j| plan.headline_score(&plan.run(Task::Shuffle(j))))
                .collect();
            stats::permutation_p(stats::mean(&observed), &null)
        });
        NeuronOutcome {
            task,
            accuracy: MeanSd::of(&outcomes.iter().map(|o| o.accuracy).collect::<Vec<_>>()),
            balanced_accuracy: MeanSd::of(
                &outcomes
                    .iter()
                    .map(|o| o.balanced_accuracy)
                    .collect::<Vec<_>>(),
            ),
            p_value,
        }
    }
}
