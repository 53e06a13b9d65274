//! The decoding protocol, cut into independent tasks.
//!
//! A [`Plan`] checks a dataset against a recipe once, then lists its [`Task`]s: each observed repeat and each
//! shuffle is one task. Running a task needs only the plan and the task's index: it builds its own random stream, so
//! the CLI can spread tasks over threads and the page over workers, in any order, and the numbers stay the same.
//! [`crate::report::Report::build`] then assembles the outcomes, in task order, into the result.
//!
//! One repeat: (1) balance classes by undersampling, (2) split into stratified or grouped folds (or, for neurons
//! recorded in separate sessions, build pseudo-trials within folds: [`crate::pseudo`]), (3)-(4) for each
//! fold fit standardisation and decoder on the training trials only and predict the test trials, (5) pool the test
//! predictions of all folds into one confusion matrix, accuracy and balanced accuracy.

use crate::data::Dataset;
use crate::decoders::tuning::Setting;
use crate::decoders::{check_counts, fit_folds, rbf_svm, Classifier, Decoder, FoldSet};
use crate::error::{Error, Result};
use crate::recipe::{Folds, Recipe};
use crate::resample::{balance, grouped_folds, permute_labels, stratified_folds};
use crate::rng::{task_rng, Stream};
use rand_core::RngCore;
use serde::{Deserialize, Serialize};

/// Kernel matrices above this size (256 MB per worker) are worth a warning on the page.
const RBF_KERNEL_WARNING_BYTES: usize = 256 << 20;

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
    /// With tuning, the setting chosen in each fit of an observed repeat, in fold order.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub chosen: Vec<Setting>,
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
    Stratified {
        folds: usize,
    },
    LeaveOneOut,
    Grouped {
        folds: usize,
    },
    LeaveOneGroupOut,
    /// Pseudo-trials built within each of `folds` folds of every session's trials ([`crate::pseudo`]).
    Pseudo {
        folds: usize,
    },
}

/// Who the trials are, without their activity: all that resampling and the design checks need.
#[derive(Debug, Clone, Copy)]
pub struct Trials<'a> {
    pub source: &'a str,
    pub y: &'a [usize],
    pub classes: &'a [String],
    pub groups: Option<&'a [usize]>,
    pub group_names: &'a [String],
    pub group_column: Option<&'a str>,
    /// The groups are recording sessions whose neurons are combined into pseudo-trials.
    pub pseudo: bool,
}

impl Trials<'_> {
    fn class_counts(&self) -> Vec<usize> {
        let mut counts = vec![0; self.classes.len()];
        for &c in self.y {
            counts[c] += 1;
        }
        counts
    }
}

/// The resampling scheme of a recipe, resolved against the trials: how folds are made, which score leads, and what
/// the user should know. Shared by every kind of analysis, so that a trial table and a time-resolved recording are
/// balanced and split by exactly the same rules.
#[derive(Debug, Clone)]
pub struct Scheme {
    pub split: Split,
    pub headline: Headline,
    /// Trials entering each repeat (after balancing).
    pub trials_per_repeat: usize,
    pub warnings: Vec<String>,
    balance: bool,
    n_classes: usize,
    n_groups: usize,
}

/// One repeat's draw: the trials used (indices into the data), their labels, and the fold of each.
pub struct Draw {
    pub used: Vec<usize>,
    pub y: Vec<usize>,
    pub fold: Vec<usize>,
    pub folds: usize,
}

impl Scheme {
    /// Check the recipe against the trials (every design error is raised here, once) and resolve the split.
    pub fn resolve(t: &Trials, recipe: &Recipe) -> Result<Scheme> {
        recipe.validate()?;
        let n_classes = t.classes.len();
        let counts = t.class_counts();
        let smallest = *counts.iter().min().expect("at least two classes");
        let (smallest_class, _) = counts
            .iter()
            .enumerate()
            .min_by_key(|&(_, c)| *c)
            .expect("classes");
        let trials_per_repeat = if recipe.balance {
            smallest * n_classes
        } else {
            t.y.len()
        };
        let mut warnings = Vec::new();
        if t.pseudo {
            return Scheme::resolve_pseudo(t, recipe, n_classes);
        }
        if recipe.classifier == Classifier::RbfSvm {
            let bytes = rbf_svm::kernel_bytes(trials_per_repeat);
            if bytes > RBF_KERNEL_WARNING_BYTES {
                warnings.push(format!(
                    "the RBF SVM keeps a kernel matrix of up to {} MB per training fold; in a browser tab with \
                     several workers this can run out of memory (the command line has no such limit)",
                    bytes >> 20
                ));
            }
        }
        let split = match (&t.groups, recipe.folds) {
            (Some(_), folds) => {
                let n_groups = t.group_names.len();
                if n_groups < 2 {
                    return Err(Error::Design(format!(
                        "{}: the group column '{}' holds a single group; grouped folds need at least two",
                        t.source,
                        t.group_column.unwrap_or("")
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
                        t.source,
                        t.classes[smallest_class],
                        per_class,
                        if per_class == 1 { "" } else { "s" },
                        if recipe.balance { " (the size every class is balanced to)" } else { "" },
                        per_class.max(2)
                    )));
                }
                Split::Stratified { folds: k }
            }
        };
        if let (Some(groups), Split::LeaveOneGroupOut) = (t.groups, split) {
            for (g, name) in t.group_names.iter().enumerate() {
                let mut others = vec![false; n_classes];
                for (i, &c) in t.y.iter().enumerate() {
                    if groups[i] != g {
                        others[c] = true;
                    }
                }
                if others.iter().filter(|&&b| b).count() < 2 {
                    return Err(Error::Design(format!(
                        "{}: leaving out group '{name}' leaves a single class to train on; with groups, every \
                         training fold needs at least two classes",
                        t.source
                    )));
                }
            }
        }
        if recipe.shuffles > 0 {
            if let Some(groups) = t.groups {
                let varies = (0..t.group_names.len()).any(|g| {
                    let mut labels =
                        t.y.iter()
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
        Ok(Scheme {
            split,
            headline,
            trials_per_repeat,
            warnings,
            balance: recipe.balance,
            n_classes,
            n_groups: t.group_names.len(),
        })
    }

    /// Pseudo-populations: k folds of every session's trials; every (session, condition) needs k trials.
    fn resolve_pseudo(t: &Trials, recipe: &Recipe, n_classes: usize) -> Result<Scheme> {
        let k = match recipe.folds {
            Folds::K(k) => k,
            Folds::LeaveOneOut => {
                return Err(Error::Design(format!(
                    "{}: pseudo-populations need k folds (each fold builds its own pseudo-trials), not leave-one-out",
                    t.source
                )))
            }
        };
        let sessions = t.groups.expect("sessions");
        let counts = crate::pseudo::counts(t.y, sessions, t.group_names.len(), n_classes);
        for (s, row) in counts.iter().enumerate() {
            for (c, &m) in row.iter().enumerate() {
                if m < k {
                    return Err(Error::Design(format!(
                        "{}: session '{}' has {m} trial{} of '{}', fewer than the {k} folds; every session needs \
                         at least {k} trials of every condition for pseudo-trials (or choose fewer folds)",
                        t.source,
                        t.group_names[s],
                        if m == 1 { "" } else { "s" },
                        t.classes[c]
                    )));
                }
            }
        }
        let per_repeat = crate::pseudo::per_fold(&counts, k).iter().sum::<usize>() * n_classes;
        Ok(Scheme {
            split: Split::Pseudo { folds: k },
            headline: Headline::Accuracy,
            trials_per_repeat: per_repeat,
            warnings: vec![crate::pseudo::CAVEAT.to_string()],
            balance: true,
            n_classes,
            n_groups: t.group_names.len(),
        })
    }

    /// Folds per repeat (for leave-one-out, the trial count; for leave-one-group-out, the group count).
    pub fn folds(&self) -> usize {
        match self.split {
            Split::Stratified { folds } | Split::Grouped { folds } | Split::Pseudo { folds } => {
                folds
            }
            Split::LeaveOneOut => self.trials_per_repeat,
            Split::LeaveOneGroupOut => self.n_groups,
        }
    }

    /// Balance (if asked) and split, for `labels` (observed or permuted), from the task's own random stream.
    pub fn draw(&self, labels: &[usize], groups: Option<&[usize]>, rng: &mut impl RngCore) -> Draw {
        let used: Vec<usize> = if self.balance {
            balance(rng, labels, self.n_classes)
        } else {
            (0..labels.len()).collect()
        };
        let y: Vec<usize> = used.iter().map(|&i| labels[i]).collect();
        let grouped = |rng: &mut _, k: usize| {
            let g = groups.expect("grouped splits exist only with groups");
            let g_used: Vec<usize> = used.iter().map(|&i| g[i]).collect();
            grouped_folds(rng, &g_used, self.n_groups, k)
        };
        let (fold, folds) = match self.split {
            Split::Stratified { folds } => {
                (stratified_folds(rng, &y, self.n_classes, folds), folds)
            }
            Split::LeaveOneOut => ((0..used.len()).collect(), used.len()),
            Split::Grouped { folds } => grouped(rng, folds),
            Split::LeaveOneGroupOut => grouped(rng, usize::MAX),
            Split::Pseudo { .. } => unreachable!("pseudo-trials are drawn by crate::pseudo::build"),
        };
        Draw {
            used,
            y,
            fold,
            folds,
        }
    }

    /// The score a run is judged by, from accuracy and balanced accuracy.
    pub fn headline_of(&self, accuracy: f64, balanced_accuracy: f64) -> f64 {
        match self.headline {
            Headline::Accuracy => accuracy,
            Headline::BalancedAccuracy => balanced_accuracy,
        }
    }
}

impl Draw {
    /// Training and test positions (into `used`) of fold `f`.
    pub fn partition(&self, f: usize) -> (Vec<usize>, Vec<usize>) {
        (0..self.used.len()).partition(|&pos| self.fold[pos] != f)
    }
}

/// A recipe checked against a dataset, ready to run tasks.
pub struct Plan<'a> {
    pub data: &'a Dataset,
    pub recipe: Recipe,
    pub scheme: Scheme,
    decoder: Box<dyn Decoder>,
    x: Vec<f64>,
}

impl<'a> Plan<'a> {
    pub fn new(data: &'a Dataset, recipe: &Recipe) -> Result<Plan<'a>> {
        let mut scheme = Scheme::resolve(&data.trials(), recipe)?;
        let mut warnings = data.warnings.clone();
        warnings.append(&mut scheme.warnings);
        scheme.warnings = warnings;
        let x: Vec<f64> = data.x.as_standard_layout().iter().copied().collect();
        scheme.warnings.extend(check_counts(
            recipe.classifier,
            &x,
            &data.feature_names,
            &data.source,
        )?);
        Ok(Plan {
            data,
            recipe: recipe.clone(),
            scheme,
            decoder: recipe.classifier.build_tuned(recipe.c, recipe.tune),
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
        let folds = self.scheme.folds();
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
        self.scheme.headline_of(o.accuracy, o.balanced_accuracy)
    }

    fn one_repeat(&self, labels: &[usize], rng: &mut impl RngCore) -> Outcome {
        let n_classes = self.data.classes.len();
        let p = self.data.n_features();
        let (x, y, fold, folds) = match self.scheme.split {
            Split::Pseudo { folds } => {
                let (x, y, fold) = crate::pseudo::build(self.data, &self.x, labels, folds, rng);
                (x, y, fold, folds)
            }
            _ => {
                let draw = self.scheme.draw(labels, self.data.groups.as_deref(), rng);
                (self.rows(&draw.used), draw.y, draw.fold, draw.folds)
            }
        };
        let set = FoldSet {
            x: &x,
            p,
            y: &y,
            fold: &fold,
            folds,
            n_classes,
        };
        score(&y, self.cross_validate(&set), n_classes)
    }

    /// Fit on every fold but one, predict that one; returns a prediction per row of the set.
    fn cross_validate(&self, set: &FoldSet) -> Predictions {
        let mut labels = vec![usize::MAX; set.y.len()];
        let (mut fits, mut capped, mut single_class) = (0, 0, 0);
        let mut chosen = Vec::new();
        for (f, model) in fit_folds(self.decoder.as_ref(), set)
            .into_iter()
            .enumerate()
        {
            let Some(model) = model else { continue };
            let (_, test) = set.partition(f);
            let predicted = model.predict(set.rows(&test));
            for (&pos, c) in test.iter().zip(predicted) {
                labels[pos] = c;
            }
            fits += 1;
            capped += u32::from(model.hit_iteration_cap());
            single_class += u32::from(model.single_class());
            chosen.extend(model.chosen());
        }
        Predictions {
            labels,
            fits,
            capped,
            single_class,
            chosen,
        }
    }

    /// Row-major rows of the trials `used`, in that order.
    fn rows(&self, used: &[usize]) -> Vec<f64> {
        let p = self.data.n_features();
        let mut out = Vec::with_capacity(used.len() * p);
        for &i in used {
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
    chosen: Vec<Setting>,
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
            chosen: Vec::new(),
        }
    }
}

/// Pool predictions into a confusion matrix, accuracy and balanced accuracy.
fn score(y: &[usize], predicted: Predictions, n_classes: usize) -> Outcome {
    let mut flat = vec![0u32; n_classes * n_classes];
    for (&t, &p) in y.iter().zip(&predicted.labels) {
        flat[t * n_classes + p] += 1;
    }
    let (accuracy, balanced_accuracy) = accuracies(&flat, n_classes);
    Outcome {
        task: Task::Repeat(0),
        accuracy,
        balanced_accuracy,
        confusion: flat.chunks(n_classes).map(<[u32]>::to_vec).collect(),
        fits: predicted.fits,
        capped_fits: predicted.capped,
        single_class_fits: predicted.single_class,
        chosen: predicted.chosen,
    }
}

/// Accuracy and balanced accuracy (mean recall over the classes present among the test trials) of row-major
/// confusion counts (rows = true class).
pub fn accuracies(confusion: &[u32], n_classes: usize) -> (f64, f64) {
    let (mut correct, mut total, mut recall_sum, mut present) = (0u64, 0u64, 0.0, 0usize);
    for (c, row) in confusion.chunks_exact(n_classes).enumerate() {
        let in_class: u32 = row.iter().sum();
        correct += u64::from(row[c]);
        total += u64::from(in_class);
        if in_class > 0 {
            recall_sum += row[c] as f64 / in_class as f64;
            present += 1;
        }
    }
    (correct as f64 / total as f64, recall_sum / present as f64)
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
    let decoder = recipe.classifier.build_tuned(recipe.c, recipe.tune);
    let x = data.x.as_standard_layout();
    // Fold numbers as given, renumbered 0, 1, … in ascending order.
    let mut names: Vec<usize> = fold_of.to_vec();
    names.sort_unstable();
    names.dedup();
    let fold: Vec<usize> = fold_of
        .iter()
        .map(|f| names.binary_search(f).expect("a listed fold"))
        .collect();
    if names.len() == 1 {
        return Err(Error::Design(format!(
            "{}: fold {} holds every trial; nothing is left to train on",
            data.source, names[0]
        )));
    }
    let set = FoldSet {
        x: x.as_slice().expect("standard layout"),
        p: data.n_features(),
        y: &data.y,
        fold: &fold,
        folds: names.len(),
        n_classes: data.classes.len(),
    };
    let mut predicted = vec![0; data.n_trials()];
    for (f, model) in fit_folds(decoder.as_ref(), &set).into_iter().enumerate() {
        let model = model.expect("every fold has training and test trials");
        let (_, test) = set.partition(f);
        for (&i, c) in test.iter().zip(model.predict(set.rows(&test))) {
            predicted[i] = c;
        }
    }
    Ok(predicted)
}
