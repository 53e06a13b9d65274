//! The continuous plan: a recipe checked against a numeric target, its tasks, and how one task runs.
//!
//! A repeat deals the trials into k folds at random (no classes, so no stratification and no balancing; folds never
//! split a group when a group column is set), and at every window fits ridge regression on the training folds
//! ([`crate::decoders::ridge`]: train-fold standardisation, centring and nested choice of α) and predicts the test
//! fold. The predictions of all folds are pooled and scored: out-of-sample R² against each test trial's training
//! mean and Pearson's correlation; for an angle, decoded as its cosine and sine, the mean absolute angular error,
//! the circular correlation and the R² of the (cosine, sine) pair. A shuffle permutes the values across trials
//! (within groups when set) once and runs the recipe's repeats per shuffle on them.

use crate::data::target::TargetData;
use crate::decoders::ridge::{self, ALPHA_GRID};
use crate::error::{Error, Result};
use crate::input::{self, FileBytes};
use crate::recipe::{AngleUnit, Classifier, Folds, Recipe};
use crate::resample::{grouped_folds, kfold, permute_labels, Task};
use crate::rng::{task_rng, Stream};
use crate::stats::{circular, regression};
use rand_core::RngCore;
use serde::{Deserialize, Serialize};
use std::f64::consts::PI;

/// How folds are made for a continuous target.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ValueSplit {
    KFold { folds: usize },
    LeaveOneOut,
    Grouped { folds: usize },
    LeaveOneGroupOut,
}

/// What the target is: a quantity on a line, or an angle.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Variable {
    Linear,
    Circular(AngleUnit),
}

/// What a task produced at every window (for a trial table, one). For a shuffle, scores are means over its repeats.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ContinuousOutcome {
    pub task: Task,
    /// Out-of-sample R² per window (for an angle: of its cosine and sine together).
    pub r2: Vec<f64>,
    /// Pearson's correlation of predicted and actual values per window (for an angle: the circular correlation).
    pub correlation: Vec<f64>,
    /// Angles only: mean absolute angular error per window, in the recipe's unit.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub angular_error: Vec<f64>,
    pub fits: u32,
    /// Observed repeats: how often each α of the grid was chosen, in grid order.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub alphas: Vec<u32>,
    /// Observed repeat 0 only: every trial's fold and prediction, for the predicted-against-actual figure and for
    /// checking the folds against a reference implementation.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub predictions: Option<Predictions>,
}

/// One repeat's cross-validated predictions.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Predictions {
    /// Fold of each trial.
    pub fold: Vec<usize>,
    /// Per window, the prediction for each trial (angles in the recipe's unit, in [0, one turn)).
    pub predicted: Vec<Vec<f64>>,
}

/// A recipe checked against a numeric target, ready to run tasks; it owns its data.
pub struct ContinuousPlan {
    pub data: TargetData,
    pub recipe: Recipe,
    pub variable: Variable,
    pub split: ValueSplit,
    pub warnings: Vec<String>,
    /// What ridge regression fits: the values (one output) or an angle's cosine and sine (two), row-major.
    outputs: Vec<f64>,
    m: usize,
}

impl ContinuousPlan {
    /// Read the files a recipe describes — one trial table, or a recording when the recipe has time settings — and
    /// check the recipe against them: the one door every face uses.
    pub fn from_files(files: &[FileBytes], recipe: &Recipe) -> Result<ContinuousPlan> {
        let data = match (&recipe.time, files) {
            (Some(t), _) => input::target::time_course(files, &recipe.columns, &t.input)?,
            (None, [file]) => input::target::trial_table(file.name, file.bytes, &recipe.columns)?,
            (None, _) => return Err(Error::Recipe("a trial table is one file".into())),
        };
        ContinuousPlan::new(data, recipe)
    }

    pub fn new(data: TargetData, recipe: &Recipe) -> Result<ContinuousPlan> {
        recipe.validate()?;
        if recipe.pairwise {
            return Err(Error::Recipe(
                "pairwise decoding is for classes; a continuous variable has no pairs of conditions".into(),
            ));
        }
        let src = data.features.source.clone();
        let variable = match recipe.classifier {
            Classifier::Ridge => Variable::Linear,
            Classifier::CircularRidge => Variable::Circular(recipe.angle_unit.expect("validated: an angle unit")),
            other => {
                return Err(Error::Recipe(format!(
                    "{} decodes classes; a continuous variable is decoded by ridge (or circular-ridge for angles)",
                    other.name()
                )))
            }
        };
        if recipe.time.is_some() != data.features.is_time() {
            return Err(Error::Recipe(
                "the recipe's time settings do not match the data (a trial table has none, a recording needs them)"
                    .into(),
            ));
        }
        let values = &data.values;
        let n = values.len();
        if values.iter().all(|&v| v == values[0]) {
            return Err(Error::Design(format!(
                "{src}: '{}' holds the single value {} on every trial; there is nothing to decode",
                data.column, values[0]
            )));
        }
        let mut warnings = data.features.warnings.clone();
        let (outputs, m) = match variable {
            Variable::Linear => (values.clone(), 1),
            Variable::Circular(unit) => {
                warnings.extend(unit_warning(values, unit, &data.column));
                let k = unit.to_radians();
                let outputs = values
                    .iter()
                    .flat_map(|&v| [libm::cos(v * k), libm::sin(v * k)])
                    .collect();
                (outputs, 2)
            }
        };
        let split = resolve_split(&data, recipe.folds, n)?;
        if recipe.shuffles > 0 {
            if let Some(groups) = &data.features.groups {
                let varies = (0..data.features.group_names.len()).any(|g| {
                    let mut in_group = values
                        .iter()
                        .zip(groups)
                        .filter(|(_, &gi)| gi == g)
                        .map(|(v, _)| v);
                    in_group
                        .next()
                        .is_some_and(|first| in_group.any(|v| v != first))
                });
                if !varies {
                    warnings.push(format!(
                        "'{}' never varies within a group, so shuffling it within groups changes nothing: the \
                         shuffle control cannot test anything here (each shuffle repeats the observed analysis on \
                         other folds, so its p-value says nothing about the values)",
                        data.column
                    ));
                }
            }
        }
        Ok(ContinuousPlan {
            data,
            recipe: recipe.clone(),
            variable,
            split,
            warnings,
            outputs,
            m,
        })
    }

    pub fn n_windows(&self) -> usize {
        self.data.features.n_windows()
    }

    /// Folds per repeat (for leave-one-out, the trial count; for leave-one-group-out, the group count).
    pub fn folds(&self) -> usize {
        match self.split {
            ValueSplit::KFold { folds } | ValueSplit::Grouped { folds } => folds,
            ValueSplit::LeaveOneOut => self.data.values.len(),
            ValueSplit::LeaveOneGroupOut => self.data.features.group_names.len(),
        }
    }

    /// Every task: the observed repeats, then the shuffles.
    pub fn tasks(&self) -> Vec<Task> {
        Task::all(self.recipe.repeats, self.recipe.shuffles)
    }

    /// Fits one task performs: folds × windows, times the repeats of a shuffle.
    pub fn fits_in(&self, task: Task) -> usize {
        let per_repeat = self.folds() * self.n_windows();
        match task {
            Task::Repeat(_) => per_repeat,
            Task::Shuffle(_) => per_repeat * self.recipe.shuffle_repeats(),
        }
    }

    pub fn run(&self, task: Task) -> ContinuousOutcome {
        let seed = self.recipe.seed;
        match task {
            Task::Repeat(i) => {
                let mut rng = task_rng(seed, Stream::Repeat, i as u64, 0);
                let mut o = self.one_repeat(&self.data.values, &self.outputs, &mut rng, i == 0);
                o.task = task;
                o
            }
            Task::Shuffle(j) => {
                let mut rng = task_rng(seed, Stream::Permutation, j as u64, 0);
                let n = self.data.values.len();
                let order = permute_labels(
                    &mut rng,
                    &(0..n).collect::<Vec<_>>(),
                    self.data.features.groups.as_deref(),
                );
                let values: Vec<f64> = order.iter().map(|&i| self.data.values[i]).collect();
                let m = self.m;
                let outputs: Vec<f64> = order
                    .iter()
                    .flat_map(|&i| self.outputs[i * m..(i + 1) * m].to_vec())
                    .collect();
                let r = self.recipe.shuffle_repeats();
                let mut total: Option<ContinuousOutcome> = None;
                for i in 0..r {
                    let mut rng = task_rng(seed, Stream::ShuffleRepeat, j as u64, i as u64);
                    let o = self.one_repeat(&values, &outputs, &mut rng, false);
                    match &mut total {
                        None => total = Some(o),
                        Some(t) => {
                            add(&mut t.r2, &o.r2);
                            add(&mut t.correlation, &o.correlation);
                            add(&mut t.angular_error, &o.angular_error);
                            t.fits += o.fits;
                        }
                    }
                }
                let mut t = total.expect("at least one repeat per shuffle");
                for v in
                    t.r2.iter_mut()
                        .chain(&mut t.correlation)
                        .chain(&mut t.angular_error)
                {
                    *v /= r as f64;
                }
                t.alphas.clear();
                t.task = task;
                t
            }
        }
    }

    /// The score the run is judged by at each window: R² for a quantity, the angular error for an angle.
    pub fn headline<'a>(&self, o: &'a ContinuousOutcome) -> &'a [f64] {
        match self.variable {
            Variable::Linear => &o.r2,
            Variable::Circular(_) => &o.angular_error,
        }
    }

    /// Whether a larger headline score is better (R²) or worse (an angular error).
    pub fn higher_is_better(&self) -> bool {
        self.variable == Variable::Linear
    }

    /// Fold numbers for one repeat.
    fn draw(&self, rng: &mut impl RngCore) -> (Vec<usize>, usize) {
        let n = self.data.values.len();
        let groups = self.data.features.groups.as_deref();
        let n_groups = self.data.features.group_names.len();
        match self.split {
            ValueSplit::KFold { folds } => (kfold(rng, n, folds), folds),
            ValueSplit::LeaveOneOut => ((0..n).collect(), n),
            ValueSplit::Grouped { folds } => {
                grouped_folds(rng, groups.expect("groups"), n_groups, folds)
            }
            ValueSplit::LeaveOneGroupOut => {
                grouped_folds(rng, groups.expect("groups"), n_groups, usize::MAX)
            }
        }
    }

    /// Cross-validate one draw of folds at every window, scoring the pooled predictions against `values`.
    fn one_repeat(
        &self,
        values: &[f64],
        outputs: &[f64],
        rng: &mut impl RngCore,
        keep: bool,
    ) -> ContinuousOutcome {
        let (fold, folds) = self.draw(rng);
        let features = &self.data.features;
        let p = features.n_features();
        let mut out = ContinuousOutcome {
            task: Task::Repeat(0),
            r2: Vec::new(),
            correlation: Vec::new(),
            angular_error: Vec::new(),
            fits: 0,
            alphas: vec![0; ALPHA_GRID.len()],
            predictions: None,
        };
        let mut kept = Vec::new();
        for w in 0..self.n_windows() {
            let cv = ridge::cross_validate(features.window(w), p, outputs, self.m, &fold, folds);
            out.fits += cv.alphas.len() as u32;
            for a in &cv.alphas {
                let at = ALPHA_GRID
                    .iter()
                    .position(|g| g == a)
                    .expect("an α of the grid");
                out.alphas[at] += 1;
            }
            out.r2.push(regression::r2_against(
                outputs,
                &cv.predicted,
                &cv.train_mean,
            ));
            let predicted = match self.variable {
                Variable::Linear => {
                    out.correlation
                        .push(regression::pearson(values, &cv.predicted));
                    cv.predicted
                }
                Variable::Circular(unit) => {
                    let k = unit.to_radians();
                    let angles: Vec<f64> = cv
                        .predicted
                        .chunks_exact(2)
                        .map(|cs| libm::atan2(cs[1], cs[0]).rem_euclid(2.0 * PI))
                        .collect();
                    let actual: Vec<f64> = values.iter().map(|v| v * k).collect();
                    out.angular_error
                        .push(circular::mean_absolute_error(&actual, &angles) / k);
                    out.correlation
                        .push(circular::correlation(&actual, &angles));
                    angles.iter().map(|a| a / k).collect()
                }
            };
            if keep {
                kept.push(predicted);
            }
        }
        if keep {
            out.predictions = Some(Predictions {
                fold,
                predicted: kept,
            });
        }
        out
    }
}

/// Folds for a continuous target: k-fold, leave-one-out, or by group; every training fold must be large enough to
/// choose α by inner cross-validation.
fn resolve_split(data: &TargetData, folds: Folds, n: usize) -> Result<ValueSplit> {
    let src = &data.features.source;
    const SMALLEST_TRAINING: usize = 4;
    if let Some(groups) = &data.features.groups {
        let n_groups = data.features.group_names.len();
        if n_groups < 2 {
            return Err(Error::Design(format!(
                "{src}: the group column '{}' holds a single group; grouped folds need at least two",
                data.features.group_column.as_deref().unwrap_or("")
            )));
        }
        let largest = (0..n_groups)
            .map(|g| groups.iter().filter(|&&x| x == g).count())
            .max()
            .unwrap_or(0);
        if n - largest < SMALLEST_TRAINING {
            return Err(Error::Design(format!(
                "{src}: leaving out the largest group leaves {} trials to train on; ridge regression needs at least \
                 {SMALLEST_TRAINING} to choose its penalty",
                n - largest
            )));
        }
        return Ok(match folds {
            Folds::K(k) if k < n_groups => ValueSplit::Grouped { folds: k },
            _ => ValueSplit::LeaveOneGroupOut,
        });
    }
    match folds {
        Folds::LeaveOneOut => Ok(ValueSplit::LeaveOneOut),
        Folds::K(k) if k >= n => Ok(ValueSplit::LeaveOneOut),
        Folds::K(k) => {
            let training = n - n.div_ceil(k);
            if training < SMALLEST_TRAINING {
                return Err(Error::Design(format!(
                    "{src}: {n} trials in {k} folds leave {training} to train on; ridge regression needs at least \
                     {SMALLEST_TRAINING} to choose its penalty"
                )));
            }
            Ok(ValueSplit::KFold { folds: k })
        }
    }
}

/// A caution when the angles do not look like the unit they are said to be in.
fn unit_warning(values: &[f64], unit: AngleUnit, column: &str) -> Option<String> {
    let largest = values.iter().fold(0.0f64, |a, v| a.max(v.abs()));
    match unit {
        AngleUnit::Degrees if largest <= 2.0 * PI + 1e-9 => Some(format!(
            "every angle in '{column}' lies within ±2π ({largest:.3} at most) although they are read as degrees: \
             if they are radians, say so, or the decoded angles will be wrong"
        )),
        AngleUnit::Radians if largest > 2.0 * PI + 1e-9 => Some(format!(
            "angles in '{column}' reach {largest} although they are read as radians (one turn is 2π ≈ 6.283): if \
             they are degrees, say so, or the decoded angles will be wrong"
        )),
        _ => None,
    }
}

fn add(total: &mut [f64], more: &[f64]) {
    for (t, m) in total.iter_mut().zip(more) {
        *t += m;
    }
}
