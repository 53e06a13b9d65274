//! The decoding protocol, cut into independent tasks.
//!
//! A [`Plan`] checks a dataset against a recipe once, then lists its [`Task`]s: each observed repeat and each
//! shuffle is one task. Running a task needs only the plan and the task's index: it builds its own random stream, so
//! the CLI can spread tasks over threads and the page over workers, in any order, and the numbers stay the same.
//! [`crate::report::Report::build`] then assembles the outcomes, in task order, into the result.
//!
//! One repeat: (1) balance classes by undersampling, (2) split into stratified or grouped folds, (3)-(4) for each
//! fold fit standardisation and decoder on the training trials only and predict the test trials, (5) pool the test
//! predictions of all folds into one confusion matrix, accuracy and balanced accuracy.

use crate::data::Dataset;
use crate::decoders::{Decoder, FittedPipeline};
use crate::error::{Error, Result};
use crate::recipe::{Folds, Recipe};
use crate::resample::{balance, grouped_folds, permute_labels, stratified_folds};
use crate::rng::{task_rng, Stream};
use rand_core::RngCore;
use serde::{Deserialize, Serialize};

/// One independent piece of work.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(tag = "kind", content = "index", rename_all = "snake_case")]
pub enum Task {
    /// Observed repeat `i`.
    Repeat(usize),
    /// Label permutation `j`, run with the recipe's repeats per shuffle.
    Shuffle(usize),
}

/// What a task produced. For a shuffle, scores are means over its repeats and the confusion matrix is left empty.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Outcome {
    pub task: Task,
    pub accuracy: f64,
    pub balanced_accuracy: f64,
    /// Counts, rows = true class, columns = predicted class.
    pub confusion: Vec<Vec<u32>>,
    pub fits: u32,
    /// Fits whose solver stopped at its iteration cap.
    pub capped_fits: u32,
    /// Fits whose training fold held a single class (grouped folds only).
    pub single_class_fits: u32,
}

/// The score a run is judged by and the null is built from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Headline {
    /// Balanced data: accuracy, which then equals balanced accuracy.
    Accuracy,
    /// Unbalanced data: raw accuracy rewards guessing the majority class, so balanced accuracy leads.
    BalancedAccuracy,
}

/// How folds are made, as resolved against the data.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Split {
    Stratified { folds: usize },
    LeaveOneOut,
    Grouped { folds: usize },
    LeaveOneGroupOut,
}

/// A recipe checked against a dataset, ready to run tasks.
pub struct Plan<'a> {
    pub data: &'a Dataset,
    pub recipe: Recipe,
    pub split: Split,
    pub headline: Headline,
    /// Trials entering each repeat (after balancing).
    pub trials_per_repeat: usize,
    pub warnings: Vec<String>,
    decoder: Box<dyn Decoder>,
    x: Vec<f64>,
}

impl<'a> Plan<'a> {
    pub fn new(data: &'a Dataset, recipe: &Recipe) -> Result<Plan<'a>> {
        recipe.validate()?;
        let n_classes = data.classes.len();
        let counts = data.class_counts();
        let smallest = *counts.iter().min().expect("at least two classes");
        let (smallest_class, _) = counts
            .iter()
            .enumerate()
            .min_by_key(|&(_, c)| *c)
            .expect("classes");
        let trials_per_repeat = if recipe.balance {
            smallest * n_classes
        } else {
            data.n_trials()
        };
        let mut warnings = data.warnings.clone();
        let split = match (&data.groups, recipe.folds) {
            (Some(_), folds) => {
                let n_groups = data.group_names.len();
                if n_groups < 2 {
                    return Err(Error::Design(format!(
                        "{}: the group column '{}' holds a single group; grouped folds need at least two",
                        data.source,
                        data.group_column.as_deref().unwrap_or("")
                    )));
                }
                match folds {
                    Folds::K(k) if k < n_groups => Split::Grouped { folds: k },
                    _ => Split::LeaveOneGroupOut,
                }
            }
            (None, Folds::LeaveOneOut) => Split::LeaveOneOut,
            (None, Folds::K(k)) if k >= trials_per_repeat => Split::LeaveOneOut,
            (None, Folds::K(k)) => {
                // The smallest class has the same size whether or not balancing is on.
                let per_class = smallest;
                if per_class < k {
                    return Err(Error::Design(format!(
                        "{}: class '{}' has {} trial{}{}, fewer than the {k} folds; choose {} or fewer folds, or \
                         leave-one-out",
                        data.source,
                        data.classes[smallest_class],
                        per_class,
                        if per_class == 1 { "" } else { "s" },
                        if recipe.balance { " (the size every class is balanced to)" } else { "" },
                        per_class.max(2)
                    )));
                }
                Split::Stratified { folds: k }
            }
        };
        if let (Some(groups), Split::LeaveOneGroupOut) = (&data.groups, split) {
            for (g, name) in data.group_names.iter().enumerate() {
                let mut others = vec![false; n_classes];
                for (i, &c) in data.y.iter().enumerate() {
                    if groups[i] != g {
                        others[c] = true;
                    }
                }
                if others.iter().filter(|&&b| b).count() < 2 {
                    return Err(Error::Design(format!(
                        "{}: leaving out group '{name}' leaves a single class to train on; with groups, every \
                         training fold needs at least two classes",
                        data.source
                    )));
                }
            }
        }
        if recipe.shuffles > 0 {
            if let Some(groups) = &data.groups {
                let varies = (0..data.group_names.len()).any(|g| {
                    let mut labels = data
                        .y
                        .iter()
                        .zip(groups)
                        .filter(|(_, &gi)| gi == g)
                        .map(|(&c, _)| c);
                    labels
                        .next()
                        .is_some_and(|first| labels.any(|c| c != first))
                });
                if !varies {
                    warnings.push(
                        "labels never vary within a group, so shuffling labels within groups leaves them unchanged: \
                         the shuffle control cannot test anything here (its p-value will be 1)"
                            .to_string(),
                    );
                }
            }
        }
        if !recipe.balance && counts.iter().any(|&c| c != smallest) {
            warnings.push(
                "classes are unbalanced and balancing is off: balanced accuracy is the headline score".to_string(),
            );
        }
        let headline = if recipe.balance {
            Headline::Accuracy
        } else {
            Headline::BalancedAccuracy
        };
        let x = data.x.as_standard_layout().iter().copied().collect();
        Ok(Plan {
            data,
            recipe: recipe.clone(),
            split,
            headline,
            trials_per_repeat,
            warnings,
            decoder: recipe.classifier.build(recipe.c),
            x,
        })
    }

    /// Every task of the analysis, repeats first, in index order.
    pub fn tasks(&self) -> Vec<Task> {
        let repeats = (0..self.recipe.repeats).map(Task::Repeat);
        repeats
            .chain((0..self.recipe.shuffles).map(Task::Shuffle))
            .collect()
    }

    /// Fits one task performs (for progress bars): folds × repeats.
    pub fn fits_in(&self, task: Task) -> usize {
        let folds = match self.split {
            Split::Stratified { folds } | Split::Grouped { folds } => folds,
            Split::LeaveOneOut => self.trials_per_repeat,
            Split::LeaveOneGroupOut => self.data.group_names.len(),
        };
        match task {
            Task::Repeat(_) => folds,
            Task::Shuffle(_) => folds * self.recipe.shuffle_repeats(),
        }
    }

    pub fn run(&self, task: Task) -> Outcome {
        let seed = self.recipe.seed;
        match task {
            Task::Repeat(i) => {
                let mut rng = task_rng(seed, Stream::Repeat, i as u64, 0);
                let mut out = self.one_repeat(&self.data.y, &mut rng);
                out.task = task;
                out
            }
            Task::Shuffle(j) => {
                let mut rng = task_rng(seed, Stream::Permutation, j as u64, 0);
                let labels = permute_labels(&mut rng, &self.data.y, self.data.groups.as_deref());
                let r = self.recipe.shuffle_repeats();
                let mut total = Outcome {
                    task,
                    ..Outcome::empty()
                };
                for i in 0..r {
                    let mut rng = task_rng(seed, Stream::ShuffleRepeat, j as u64, i as u64);
                    let o = self.one_repeat(&labels, &mut rng);
                    total.accuracy += o.accuracy;
                    total.balanced_accuracy += o.balanced_accuracy;
                    total.fits += o.fits;
                    total.capped_fits += o.capped_fits;
                    total.single_class_fits += o.single_class_fits;
                }
                total.accuracy /= r as f64;
                total.balanced_accuracy /= r as f64;
                total
            }
        }
    }

    /// The headline score of an outcome.
    pub fn headline_score(&self, o: &Outcome) -> f64 {
        match self.headline {
            Headline::Accuracy => o.accuracy,
            Headline::BalancedAccuracy => o.balanced_accuracy,
        }
    }

    fn one_repeat(&self, labels: &[usize], rng: &mut impl RngCore) -> Outcome {
        let n_classes = self.data.classes.len();
        let used: Vec<usize> = if self.recipe.balance {
            balance(rng, labels, n_classes)
        } else {
            (0..labels.len()).collect()
        };
        let y: Vec<usize> = used.iter().map(|&i| labels[i]).collect();
        let grouped = |rng: &mut _, k: usize| {
            let g = self
                .data
                .groups
                .as_ref()
                .expect("grouped splits exist only with groups");
            let g_used: Vec<usize> = used.iter().map(|&i| g[i]).collect();
            grouped_folds(rng, &g_used, self.data.group_names.len(), k)
        };
        let (fold, k) = match self.split {
            Split::Stratified { folds } => (stratified_folds(rng, &y, n_classes, folds), folds),
            Split::LeaveOneOut => ((0..used.len()).collect(), used.len()),
            Split::Grouped { folds } => grouped(rng, folds),
            Split::LeaveOneGroupOut => grouped(rng, usize::MAX),
        };
        let predicted = self.cross_validate(&used, &y, &fold, k);
        score(
            &y,
            &predicted.labels,
            n_classes,
            predicted.fits,
            predicted.capped,
            predicted.single_class,
        )
    }

    /// Fit on every fold but one, predict that one; returns a prediction per position of `used`.
    fn cross_validate(&self, used: &[usize], y: &[usize], fold: &[usize], k: usize) -> Predictions {
        let p = self.data.n_features();
        let n_classes = self.data.classes.len();
        let mut labels = vec![usize::MAX; used.len()];
        let (mut fits, mut capped, mut single_class) = (0, 0, 0);
        for f in 0..k {
            let (train, test): (Vec<usize>, Vec<usize>) =
                (0..used.len()).partition(|&pos| fold[pos] != f);
            if test.is_empty() || train.is_empty() {
                continue;
            }
            let x_train = self.rows(used, &train);
            let y_train: Vec<usize> = train.iter().map(|&pos| y[pos]).collect();
            let model =
                FittedPipeline::fit(self.decoder.as_ref(), &x_train, p, &y_train, n_classes);
            let predicted = model.predict(self.rows(used, &test));
            for (&pos, c) in test.iter().zip(predicted) {
                labels[pos] = c;
            }
            fits += 1;
            capped += u32::from(model.hit_iteration_cap());
            single_class += u32::from(model.single_class());
        }
        Predictions {
            labels,
            fits,
            capped,
            single_class,
        }
    }

    fn rows(&self, used: &[usize], positions: &[usize]) -> Vec<f64> {
        let p = self.data.n_features();
        let mut out = Vec::with_capacity(positions.len() * p);
        for &pos in positions {
            let i = used[pos];
            out.extend_from_slice(&self.x[i * p..(i + 1) * p]);
        }
        out
    }
}

struct Predictions {
    labels: Vec<usize>,
    fits: u32,
    capped: u32,
    single_class: u32,
}

impl Outcome {
    fn empty() -> Outcome {
        Outcome {
            task: Task::Repeat(0),
            accuracy: 0.0,
            balanced_accuracy: 0.0,
            confusion: Vec::new(),
            fits: 0,
            capped_fits: 0,
            single_class_fits: 0,
        }
    }
}

/// Pool predictions into a confusion matrix, accuracy and balanced accuracy (mean recall over the classes present
/// among the test trials).
fn score(
    y: &[usize],
    predicted: &[usize],
    n_classes: usize,
    fits: u32,
    capped: u32,
    single: u32,
) -> Outcome {
    let mut confusion = vec![vec![0u32; n_classes]; n_classes];
    for (&t, &p) in y.iter().zip(predicted) {
        confusion[t][p] += 1;
    }
    let correct: u32 = (0..n_classes).map(|c| confusion[c][c]).sum();
    let recalls: Vec<f64> = confusion
        .iter()
        .enumerate()
        .filter_map(|(c, row)| {
            let total: u32 = row.iter().sum();
            (total > 0).then(|| row[c] as f64 / total as f64)
        })
        .collect();
    Outcome {
        task: Task::Repeat(0),
        accuracy: correct as f64 / y.len() as f64,
        balanced_accuracy: recalls.iter().sum::<f64>() / recalls.len() as f64,
        confusion,
        fits,
        capped_fits: capped,
        single_class_fits: single,
    }
}

/// Cross-validated predictions on fold assignments the caller supplies (one fold number per trial).
///
/// For users who must reproduce a split made elsewhere, and for the reference checks, which hand identical folds
/// to scikit-learn. No balancing and no randomness: trial `i` is predicted by the pipeline fitted on every trial
/// whose fold differs from its own.
pub fn predict_with_folds(
    data: &Dataset,
    recipe: &Recipe,
    fold_of: &[usize],
) -> Result<Vec<usize>> {
    if fold_of.len() != data.n_trials() {
        return Err(Error::Design(format!(
            "{}: {} fold numbers for {} trials",
            data.source,
            fold_of.len(),
            data.n_trials()
        )));
    }
    let decoder = recipe.classifier.build(recipe.c);
    let p = data.n_features();
    let x = data.x.as_standard_layout();
    let flat = x.as_slice().expect("standard layout");
    let mut folds: Vec<usize> = fold_of.to_vec();
    folds.sort_unstable();
    folds.dedup();
    let mut predicted = vec![0; data.n_trials()];
    for f in folds {
        let (train, test): (Vec<usize>, Vec<usize>) =
            (0..data.n_trials()).partition(|&i| fold_of[i] != f);
        if train.is_empty() {
            return Err(Error::Design(format!(
                "{}: fold {f} holds every trial; nothing is left to train on",
                data.source
            )));
        }
        let gather = |idx: &[usize]| {
            idx.iter()
                .flat_map(|&i| flat[i * p..(i + 1) * p].iter().copied())
                .collect::<Vec<_>>()
        };
        let y_train: Vec<usize> = train.iter().map(|&i| data.y[i]).collect();
        let model = FittedPipeline::fit(
            decoder.as_ref(),
            &gather(&train),
            p,
            &y_train,
            data.classes.len(),
        );
        for (&i, c) in test.iter().zip(model.predict(gather(&test))) {
            predicted[i] = c;
        }
    }
    Ok(predicted)
}
