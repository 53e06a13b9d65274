//! The power analysis's plan: its grids resolved against the data, every subsample a task, and how one task runs
//! the recipe's protocol (repeats and a shuffle control) on the data that subsample decodes.

use crate::analyses::neurons::{sizes, subset};
use crate::analyses::trial_table::{report::Report, Plan};
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::recipe::power::sorted;
use crate::recipe::{Folds, PowerSettings, Recipe};
use crate::resample::undersample;
use crate::rng::{shuffle, task_rng, Stream};
use ndarray::{s, Array2};
use rand_core::RngCore;
use serde::{Deserialize, Serialize};

/// The most fits a power analysis may plan: about an hour on one core of the project's machine for the recorded
/// example, and more than any face should start without the user lowering a setting first.
pub const MAX_FITS: u64 = 5_000_000;
/// The most values (trials × neurons, noise neurons included) one subsample may decode: 160 MB of doubles, held
/// once per running task.
pub const MAX_VALUES: usize = 20_000_000;
/// Sizes in the automatic trials grid.
const TRIAL_POINTS: usize = 6;

/// One independent piece of work: one subsample, subset or noise draw at one grid point.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum PowerTask {
    /// Draw `draw` of `per_class` real trials of every class, with every neuron.
    Trials { per_class: usize, draw: usize },
    /// Draw `draw` of a random subset of `size` neurons, with every trial.
    Neurons { size: usize, draw: usize },
    /// Draw `draw` of `added` noise neurons appended to every recorded neuron, with every trial.
    Noise { added: usize, draw: usize },
}

impl PowerTask {
    /// (axis, grid value, draw): the coordinates of the task's random streams.
    fn coordinates(self) -> (u64, usize, usize) {
        match self {
            PowerTask::Trials { per_class, draw } => (0, per_class, draw),
            PowerTask::Neurons { size, draw } => (1, size, draw),
            PowerTask::Noise { added, draw } => (2, added, draw),
        }
    }
}

/// What one subsample's protocol found.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PowerOutcome {
    pub task: PowerTask,
    /// The headline score, mean over the protocol's observed repeats.
    pub score: f64,
    /// The shuffle control's p-value, (b + 1)/(m + 1).
    pub p_value: f64,
    pub fits: u32,
    pub capped_fits: u32,
    pub single_class_fits: u32,
}

/// The grids a plan runs, resolved against the data.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Grids {
    /// Trials per class.
    pub trials: Vec<usize>,
    /// Recorded neurons kept.
    pub neurons: Vec<usize>,
    /// Noise neurons added.
    pub noise: Vec<usize>,
    /// Trials per class up to which the learning curve is extrapolated.
    pub extrapolate_to: usize,
}

/// A power analysis of a recipe on a dataset.
pub struct PowerPlan {
    /// The recipe, its power settings included (as given: grids left to the data stay `None`).
    pub recipe: Recipe,
    pub settings: PowerSettings,
    pub grids: Grids,
    /// The trial-table plan of the whole recording; it owns the data.
    pub plan: Plan,
    /// Folds per repeat at each size of the trials grid.
    trial_folds: Vec<usize>,
}

impl PowerPlan {
    /// Check the recipe and its power settings against the data, resolve the grids and check the cost, before any
    /// work starts.
    pub fn new(data: Dataset, recipe: &Recipe) -> Result<PowerPlan> {
        let settings = recipe.power.clone().unwrap_or_default();
        let mut recipe = recipe.clone();
        recipe.power = Some(settings.clone());
        recipe.validate()?;
        if data.pseudo.is_some() {
            return Err(Error::Design(
                "the power analysis reads neurons recorded together; pseudo-populations are not supported yet"
                    .into(),
            ));
        }
        if let Some(g) = &data.group_column {
            return Err(Error::Design(format!(
                "the power analysis cannot use the group column '{g}' yet: subsamples of trials would not keep the \
                 groups that grouped folds and within-group shuffles rely on; run it without a group column"
            )));
        }
        let smallest_p = 1.0 / (recipe.shuffles + 1) as f64;
        if smallest_p > settings.alpha {
            return Err(Error::Recipe(format!(
                "with {} shuffles per subsample the smallest p-value is {}, above α = {}, so no subsample could be \
                 significant; use at least {} shuffles",
                recipe.shuffles,
                crate::report::text::floor_words(recipe.shuffles),
                settings.alpha,
                (1.0 / settings.alpha).ceil() as usize - 1
            )));
        }
        let plan = Plan::new(data, &recipe)?;
        let grids = resolve_grids(&plan.data, &recipe, &settings)?;
        let mut out = PowerPlan {
            recipe,
            settings,
            grids,
            plan,
            trial_folds: Vec::new(),
        };
        out.trial_folds = out
            .grids
            .trials
            .iter()
            .map(|&n| {
                out.task_plan(PowerTask::Trials {
                    per_class: n,
                    draw: 0,
                })
                .map(|p| p.scheme.folds())
            })
            .collect::<Result<_>>()?;
        let (n, p) = (out.plan.data.n_trials(), out.plan.data.n_features());
        let widest = p.saturating_add(out.grids.noise.last().copied().unwrap_or(0));
        if n.saturating_mul(widest) > MAX_VALUES {
            return Err(Error::Design(format!(
                "adding {} noise neurons makes {n} trials × {widest} neurons, more than the {MAX_VALUES} values a \
                 subsample may hold; add fewer noise neurons",
                widest - p
            )));
        }
        // Counted per grid point, so that an absurd setting is refused without listing its tasks.
        let (mut tasks, mut total) = (0u64, 0u64);
        for point in out.points() {
            let draws = out.draws(point) as u64;
            tasks = tasks.saturating_add(draws);
            total = total.saturating_add(draws.saturating_mul(out.fits_in(point) as u64));
        }
        if total > MAX_FITS {
            return Err(Error::Design(format!(
                "this power analysis needs {total} fits over {tasks} subsamples, more than the {MAX_FITS} allowed; \
                 lower the subsamples per size, the repeats or shuffles of each subsample, or the number of sizes"
            )));
        }
        Ok(out)
    }

    /// Draws at a grid point: one where every draw would decode the same data (every neuron; no noise neurons).
    pub fn draws(&self, point: PowerTask) -> usize {
        let p = self.plan.data.n_features();
        match point {
            PowerTask::Neurons { size, .. } if size == p => 1,
            PowerTask::Noise { added: 0, .. } => 1,
            _ => self.settings.subsamples,
        }
    }

    /// Every grid point (as its task with draw 0): the trials axis, the neurons axis, then the noise axis.
    fn points(&self) -> impl Iterator<Item = PowerTask> + '_ {
        let g = &self.grids;
        g.trials
            .iter()
            .map(|&per_class| PowerTask::Trials { per_class, draw: 0 })
            .chain(
                g.neurons
                    .iter()
                    .map(|&size| PowerTask::Neurons { size, draw: 0 }),
            )
            .chain(
                g.noise
                    .iter()
                    .map(|&added| PowerTask::Noise { added, draw: 0 }),
            )
    }

    /// Every task: the trials axis, the neurons axis, then the noise axis, each by size and then draw.
    pub fn tasks(&self) -> Vec<PowerTask> {
        self.points()
            .flat_map(|point| (0..self.draws(point)).map(move |d| with_draw(point, d)))
            .collect()
    }

    /// Fits a task performs: (repeats + shuffles × repeats per shuffle) × folds.
    pub fn fits_in(&self, task: PowerTask) -> usize {
        let folds = match task {
            PowerTask::Trials { per_class, .. } => {
                let i = self
                    .grids
                    .trials
                    .iter()
                    .position(|&n| n == per_class)
                    .expect("a size of the grid");
                self.trial_folds[i]
            }
            _ => self.plan.scheme.folds(),
        };
        let r = &self.recipe;
        r.repeats
            .saturating_add(r.shuffles.saturating_mul(r.shuffle_repeats()))
            .saturating_mul(folds)
    }

    /// Run one subsample's protocol: its observed repeats and its shuffles, scored as the trial-table analysis
    /// scores them.
    pub fn run(&self, task: PowerTask) -> PowerOutcome {
        let plan = self
            .task_plan(task)
            .expect("every grid point was checked when the plan was made");
        let outcomes: Vec<_> = plan.tasks().into_iter().map(|t| plan.run(t)).collect();
        let report = Report::build(&plan, &outcomes);
        PowerOutcome {
            task,
            score: report.shuffle.observed,
            p_value: report
                .shuffle
                .p_value
                .expect("a power analysis always shuffles"),
            fits: report.fits.total as u32,
            capped_fits: report.fits.capped as u32,
            single_class_fits: report.fits.single_class as u32,
        }
    }

    /// The trial-table plan a task runs: the data it decodes, and the recipe with the task's own seed.
    pub fn task_plan(&self, task: PowerTask) -> Result<Plan> {
        let mut recipe = self.recipe.clone();
        recipe.seed = self.protocol_seed(task);
        Plan::new(self.dataset(task), &recipe)
    }

    /// The data a task decodes.
    pub fn dataset(&self, task: PowerTask) -> Dataset {
        let data = &self.plan.data;
        match task {
            PowerTask::Trials { per_class, draw } => {
                data.with_trials(&self.trial_subsample(per_class, draw))
            }
            PowerTask::Neurons { size, draw } => {
                data.with_features(&subset(self.recipe.seed, data.n_features(), size, draw))
            }
            PowerTask::Noise { added, draw } => self.with_noise(added, draw),
        }
    }

    /// The trials (indices into the recording, sorted) of a trials subsample: `per_class` of every class, drawn
    /// without replacement from the stream (seed, power trials, per_class, draw).
    pub fn trial_subsample(&self, per_class: usize, draw: usize) -> Vec<usize> {
        let data = &self.plan.data;
        let mut rng = task_rng(
            self.recipe.seed,
            Stream::PowerTrials,
            per_class as u64,
            draw as u64,
        );
        undersample(&mut rng, &data.y, data.classes.len(), per_class)
    }

    /// The recording with `added` noise neurons appended. Noise neuron k copies recorded neuron `sources[k]`
    /// (the recorded neurons in a random order, cycled through again when more are added than were recorded)
    /// with its values permuted across all trials: its distribution of values is exactly the recorded one, and
    /// its relation to the condition and to every other neuron is gone.
    pub fn with_noise(&self, added: usize, draw: usize) -> Dataset {
        let data = &self.plan.data;
        let (n, p) = (data.n_trials(), data.n_features());
        let mut rng = task_rng(
            self.recipe.seed,
            Stream::NoiseNeurons,
            added as u64,
            draw as u64,
        );
        let mut sources = Vec::with_capacity(added + p);
        while sources.len() < added {
            let mut order: Vec<usize> = (0..p).collect();
            shuffle(&mut rng, &mut order);
            sources.extend(order);
        }
        sources.truncate(added);
        let mut x = Array2::zeros((n, p + added));
        x.slice_mut(s![.., ..p]).assign(&data.x);
        let mut names = data.feature_names.clone();
        for (k, &source) in sources.iter().enumerate() {
            let mut order: Vec<usize> = (0..n).collect();
            shuffle(&mut rng, &mut order);
            for (t, &from) in order.iter().enumerate() {
                x[[t, p + k]] = data.x[[from, source]];
            }
            names.push(format!(
                "noise {} (permuted {})",
                k + 1,
                data.feature_names[source]
            ));
        }
        Dataset {
            x: x.into_shared(),
            feature_names: names,
            warnings: Vec::new(),
            ..data.clone()
        }
    }

    /// The seed of a task's own protocol (its balancing, folds and permutations), from the stream
    /// (seed, power protocol, axis and size, draw).
    fn protocol_seed(&self, task: PowerTask) -> u64 {
        let (axis, size, draw) = task.coordinates();
        task_rng(
            self.recipe.seed,
            Stream::PowerProtocol,
            (axis << 48) | size as u64,
            draw as u64,
        )
        .next_u64()
    }
}

/// A grid point's task with another draw.
fn with_draw(point: PowerTask, draw: usize) -> PowerTask {
    match point {
        PowerTask::Trials { per_class, .. } => PowerTask::Trials { per_class, draw },
        PowerTask::Neurons { size, .. } => PowerTask::Neurons { size, draw },
        PowerTask::Noise { added, .. } => PowerTask::Noise { added, draw },
    }
}

/// The fewest trials per class a subsample can be cross-validated with: two, and with k folds at least k unless
/// the whole subsample has no more trials than folds (then leave-one-out).
fn allowed_per_class(n: usize, folds: Folds, classes: usize) -> bool {
    n >= 2
        && match folds {
            Folds::LeaveOneOut => true,
            Folds::K(k) => n >= k || n * classes <= k,
        }
}

/// The grids of the settings, or chosen from the data: trials per class from the folds (two for leave-one-out) to
/// the smallest class in six roughly geometric steps; neuron counts 1, 2, 4, … and the whole population (as the
/// dropping curve); noise neurons 0, ½, 1, 2 and 4 times the recorded count.
fn resolve_grids(data: &Dataset, recipe: &Recipe, s: &PowerSettings) -> Result<Grids> {
    let counts = data.class_counts();
    let classes = counts.len();
    let smallest = counts.iter().copied().min().unwrap_or(0);
    let p = data.n_features();
    // From here on every size can be cross-validated (below k, only subsamples with no more trials than folds,
    // which are then left out one at a time).
    let fewest = match recipe.folds {
        Folds::K(k) => k.max(2),
        Folds::LeaveOneOut => 2,
    };
    let folds_text = match recipe.folds {
        Folds::K(k) => format!("{k} folds"),
        Folds::LeaveOneOut => "leave-one-out".into(),
    };
    let trials = match &s.trials {
        Some(g) => sorted(g),
        None => {
            if fewest > smallest {
                return Err(Error::Design(format!(
                    "{}: the smallest class has {smallest} trial{}; subsamples cross-validated with {folds_text} \
                     need at least {fewest} per class",
                    data.source,
                    if smallest == 1 { "" } else { "s" },
                )));
            }
            geometric(fewest, smallest, TRIAL_POINTS)
        }
    };
    for &n in &trials {
        if n > smallest {
            return Err(Error::Design(format!(
                "{}: {n} trials per class asked, but the smallest class has {smallest}; subsamples use only real \
                 trials (sizes beyond the recording are extrapolated, not measured)",
                data.source
            )));
        }
        if !allowed_per_class(n, recipe.folds, classes) {
            return Err(Error::Design(format!(
                "{n} trials per class cannot be cross-validated with {folds_text}: use at least {fewest} trials per \
                 class or fewer folds"
            )));
        }
    }
    let neurons = match &s.neurons {
        Some(g) => sorted(g),
        None => sizes(p),
    };
    if let Some(&big) = neurons.iter().find(|&&m| m > p) {
        return Err(Error::Design(format!(
            "{}: {big} neurons asked, but the table has {p}; neuron subsets use only recorded neurons",
            data.source
        )));
    }
    let noise = match &s.noise {
        Some(g) => sorted(g),
        None => sorted(&[0, p / 2, p, 2 * p, 4 * p]),
    };
    let largest = *trials.last().expect("a grid is never empty");
    let extrapolate_to = s.extrapolate_to.unwrap_or(4 * largest);
    if extrapolate_to <= largest {
        return Err(Error::Recipe(format!(
            "the extrapolation must reach beyond the largest measured size ({largest} trials per class); got \
             {extrapolate_to}"
        )));
    }
    Ok(Grids {
        trials,
        neurons,
        noise,
        extrapolate_to,
    })
}

/// About `points` whole numbers from `lo` to `hi`, evenly spaced on a log scale, without repeats.
pub fn geometric(lo: usize, hi: usize, points: usize) -> Vec<usize> {
    if hi <= lo || points < 2 {
        return vec![hi.max(lo)];
    }
    let ratio = hi as f64 / lo as f64;
    let grid: Vec<usize> = (0..points)
        .map(|i| {
            let v = lo as f64 * libm::pow(ratio, i as f64 / (points - 1) as f64);
            (libm::round(v) as usize).clamp(lo, hi)
        })
        .collect();
    sorted(&grid)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn geometric_grids_run_from_end_to_end() {
        // 5 × 11.2^(i/5) = 5, 8.1, 13.1, 21.3, 34.6, 56.
        assert_eq!(geometric(5, 56, 6), vec![5, 8, 13, 21, 35, 56]);
        assert_eq!(geometric(2, 3, 6), vec![2, 3]);
        assert_eq!(geometric(7, 7, 6), vec![7]);
    }

    #[test]
    fn folds_set_the_fewest_trials() {
        assert!(!allowed_per_class(4, Folds::K(5), 4));
        assert!(allowed_per_class(5, Folds::K(5), 4));
        assert!(
            allowed_per_class(2, Folds::K(5), 2),
            "4 trials, 5 folds: leave-one-out"
        );
        assert!(!allowed_per_class(1, Folds::LeaveOneOut, 3));
    }
}
