//! The plan of generalization across conditions: a recipe checked against the trials, its tasks, and how one task
//! runs.
//!
//! For each assignment of the second column's levels to training and testing, a repeat
//! 1. balances the training set by the label — every (level, label) cell undersampled at random to the smallest
//!    cell of the set, so that neither the label nor a level's share of a label can tell the decoder anything about
//!    the other — and the testing set the same way, on its own;
//! 2. fits standardisation and decoder on the training set only and predicts the testing set: the generalization
//!    score (at every window, and with temporal generalization from every window to every window);
//! 3. cross-validates within the testing set (stratified folds, grouped when a group column is set) for the
//!    within-condition score beside it: how well a decoder trained on those same levels does.
//!
//! A shuffle permutes the labels within each level of the second column (and within each group, when set) — which
//! keeps every level's label counts and removes any relation of activity to label that could carry over — and runs
//! the recipe's repeats per shuffle of the generalization score for every assignment. With temporal
//! generalization and its default null, the train × test matrix has a null of its own in each shuffle: only the
//! training trials' labels permuted, the testing trials keeping theirs (see [`AcrossPlan::run`]).

use crate::data::across::AcrossData;
use crate::decoders::{
    self, check_counts, cross_validate, Decoder, FittedPipeline, FoldSet, Nesting,
};
use crate::error::{Error, Result};
use crate::input::{self, FileBytes};
use crate::recipe::{Assignment, Folds, GeneralizationNull, Recipe, Setting, TimeInput};
use crate::resample::score::accuracies;
use crate::resample::{balance, grouped_folds, permute_labels, stratified_folds, Headline, Task};
use crate::rng::{task_rng, Stream};
use rand_core::RngCore;
use serde::{Deserialize, Serialize};

/// More assignments than this are refused before any work starts (10 levels have 252 balanced dichotomies).
pub const MAX_ASSIGNMENTS: usize = 252;

/// How folds are made within a testing set for the within-condition score.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum WithinSplit {
    Stratified { folds: usize },
    LeaveOneOut,
    Grouped { folds: usize },
    LeaveOneGroupOut,
}

/// One assignment resolved against the data: level indices, and the trials of each set.
#[derive(Debug, Clone)]
pub struct Resolved {
    pub train: Vec<usize>,
    pub test: Vec<usize>,
    /// Trials (indices into the data) at the training and the testing levels.
    train_trials: Vec<usize>,
    test_trials: Vec<usize>,
    /// With balancing: trials kept per (level, label) cell in each set.
    pub train_per_cell: usize,
    pub test_per_cell: usize,
    /// Trials entering each repeat (after balancing).
    pub train_size: usize,
    pub test_size: usize,
    pub within: WithinSplit,
}

/// What a task produced, per assignment and window. For a shuffle, generalization scores are means over its repeats
/// and the within-condition scores are left empty.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AcrossOutcome {
    pub task: Task,
    /// `[assignment][window]`.
    pub accuracy: Vec<Vec<f64>>,
    pub balanced_accuracy: Vec<Vec<f64>>,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub within_accuracy: Vec<Vec<f64>>,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub within_balanced_accuracy: Vec<Vec<f64>>,
    /// With temporal generalization: `[assignment][train window × test window]`, headline score, row-major.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub matrix: Vec<Vec<f64>>,
    pub fits: u32,
    pub capped_fits: u32,
    pub single_class_fits: u32,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub chosen: Vec<Setting>,
    /// Observed repeat 0 of a trial table: which trials trained and tested, and every decision.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub decisions: Vec<Decisions>,
}

/// One assignment's trials and decisions in one repeat (trial indices in file order, after any left out).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Decisions {
    pub train: Vec<usize>,
    pub test: Vec<usize>,
    /// Predicted class of each testing trial by the decoder trained on the training set.
    pub predicted: Vec<usize>,
    /// Fold of each testing trial, and its prediction, in the within-condition cross-validation.
    pub within_fold: Vec<usize>,
    pub within_predicted: Vec<usize>,
}

/// A recipe checked against the data, ready to run tasks; it owns its data.
pub struct AcrossPlan {
    pub data: AcrossData,
    pub recipe: Recipe,
    pub assignments: Vec<Resolved>,
    /// True when the assignments are every balanced dichotomy of the levels (none was named).
    pub dichotomies: bool,
    pub headline: Headline,
    pub generalize: bool,
    /// With temporal generalization: the null of the train × test matrix.
    pub matrix_null: Option<GeneralizationNull>,
    pub warnings: Vec<String>,
    decoder: Box<dyn Decoder>,
    /// Label permutations stay within these strata: level × group.
    strata: Vec<usize>,
    /// For a decoder of counts on spike events: the window width, which turns the rates back into exact counts.
    count_scale: Option<f64>,
}

impl AcrossPlan {
    /// Read the files a recipe describes — one trial table, or a recording when the recipe has time settings — and
    /// check the recipe against them: the one door every face uses.
    pub fn from_files(files: &[FileBytes], recipe: &Recipe) -> Result<AcrossPlan> {
        let column = &recipe
            .across
            .as_ref()
            .ok_or_else(|| {
                Error::Recipe("this recipe names no column to generalize across".into())
            })?
            .column;
        let data = match (&recipe.time, files) {
            (Some(t), _) => input::across::time_course(files, &recipe.columns, &t.input, column)?,
            (None, [file]) => {
                input::across::trial_table(file.name, file.bytes, &recipe.columns, column)?
            }
            (None, _) => return Err(Error::Recipe("a trial table is one file".into())),
        };
        AcrossPlan::new(data, recipe)
    }

    pub fn new(data: AcrossData, recipe: &Recipe) -> Result<AcrossPlan> {
        recipe.validate()?;
        decoders::require_classes(recipe.classifier)?;
        if recipe.pairwise {
            return Err(Error::Recipe(
                "pairwise decoding is an analysis of one recording's classes; it is not combined with training \
                 and testing across conditions"
                    .into(),
            ));
        }
        let across = recipe.across.as_ref().ok_or_else(|| {
            Error::Recipe("this recipe names no column to generalize across".into())
        })?;
        let features = &data.features;
        if recipe.time.is_some() != features.is_time() {
            return Err(Error::Recipe(
                "the recipe's time settings do not match the data (a trial table has none, a recording needs them)"
                    .into(),
            ));
        }
        let named = !across.assignments.is_empty();
        let pairs = if named {
            across
                .assignments
                .iter()
                .map(|a| level_indices(&data, a))
                .collect::<Result<Vec<_>>>()?
        } else {
            let n = data.level_names.len();
            let count = dichotomy_count(n);
            if count > MAX_ASSIGNMENTS {
                return Err(Error::Design(format!(
                    "{}: '{}' has {n} levels, which make {count} balanced dichotomies (more than {MAX_ASSIGNMENTS}); \
                     name the training and testing levels instead",
                    features.source, data.across_column
                )));
            }
            balanced_dichotomies(n)
        };
        let assignments = pairs
            .into_iter()
            .map(|(train, test)| resolve(&data, recipe, train, test))
            .collect::<Result<Vec<_>>>()?;
        let mut warnings = features.warnings.clone();
        let largest = assignments.iter().map(|a| a.train_size).max().unwrap_or(0);
        warnings.extend(decoders::memory_warning(recipe.classifier, largest));
        let count_scale = match recipe.time.as_ref().map(|t| &t.input) {
            Some(TimeInput::Events { width, .. } | TimeInput::Nwb { width, .. })
                if recipe.classifier.needs_counts() =>
            {
                Some(*width)
            }
            _ => None,
        };
        warnings.extend(
            check_counts(
                recipe.classifier,
                features.values(),
                &features.names,
                &features.source,
            )?
            .filter(|_| count_scale.is_none()),
        );
        let all_kept = assignments
            .iter()
            .all(|a| a.train_size == a.train_trials.len() && a.test_size == a.test_trials.len());
        if recipe.balance && all_kept {
            warnings.push(
                "every level × class cell holds the same number of trials, so balancing leaves every trial in and \
                 the generalization score is the same in every repeat (its SD over repeats is 0); repeats can vary only \
                 the folds of the within-condition score"
                    .to_string(),
            );
        }
        if !recipe.balance {
            warnings.push(
                "balancing is off: the training and testing sets keep their label and level proportions, and \
                 balanced accuracy is the headline score"
                    .to_string(),
            );
        }
        let strata: Vec<usize> = match &features.groups {
            Some(g) => data
                .levels
                .iter()
                .zip(g)
                .map(|(&l, &gi)| l * features.group_names.len() + gi)
                .collect(),
            None => data.levels.clone(),
        };
        if recipe.shuffles > 0 {
            let n_strata = strata.iter().max().map_or(0, |m| m + 1);
            let varies = (0..n_strata).any(|s| {
                let mut labels = data
                    .y
                    .iter()
                    .zip(&strata)
                    .filter(|(_, &si)| si == s)
                    .map(|(c, _)| c);
                labels
                    .next()
                    .is_some_and(|first| labels.any(|c| c != first))
            });
            if !varies {
                warnings.push(
                    "labels never vary within a level (and group), so permuting them there changes nothing: the \
                     shuffle control cannot test anything here (each shuffle repeats the observed analysis on \
                     other folds, so its p-value says nothing about the labels)"
                        .to_string(),
                );
            }
        }
        // With temporal generalization, the matrix's null is written out, so that a saved recipe keeps its meaning
        // whatever the default.
        let mut recipe = recipe.clone();
        let matrix_null = recipe.time.as_mut().filter(|t| t.generalize).map(|t| {
            let null = t.generalization_null();
            t.generalization_null = Some(null);
            null
        });
        Ok(AcrossPlan {
            headline: if recipe.balance {
                Headline::Accuracy
            } else {
                Headline::BalancedAccuracy
            },
            generalize: matrix_null.is_some(),
            matrix_null,
            decoder: decoders::build(recipe.classifier, recipe.c, recipe.tune),
            recipe,
            dichotomies: !named,
            assignments,
            warnings,
            strata,
            count_scale,
            data,
        })
    }

    pub fn n_windows(&self) -> usize {
        self.data.features.n_windows()
    }

    /// Every task: the observed repeats, then the shuffles.
    pub fn tasks(&self) -> Vec<Task> {
        Task::all(self.recipe.repeats, self.recipe.shuffles)
    }

    /// Fits one task performs: per assignment and window, one generalization fit and, in an observed repeat, the
    /// within-condition folds; in a shuffle with the training-label null, a second fit for the matrix's null.
    pub fn fits_in(&self, task: Task) -> usize {
        let nw = self.n_windows();
        match task {
            Task::Repeat(_) => self
                .assignments
                .iter()
                .map(|a| nw * (1 + self.within_folds(a)))
                .sum(),
            Task::Shuffle(_) => {
                let per_repeat = if self.training_label_null() { 2 } else { 1 };
                self.assignments.len() * nw * self.recipe.shuffle_repeats() * per_repeat
            }
        }
    }

    /// Whether the matrix's null permutes only the training trials' labels (and so is run apart from the curve's).
    fn training_label_null(&self) -> bool {
        self.matrix_null == Some(GeneralizationNull::TrainingLabels)
    }

    /// Folds of the within-condition cross-validation of an assignment.
    pub fn within_folds(&self, a: &Resolved) -> usize {
        match a.within {
            WithinSplit::Stratified { folds } | WithinSplit::Grouped { folds } => folds,
            WithinSplit::LeaveOneOut => a.test_size,
            WithinSplit::LeaveOneGroupOut => {
                let g = self.data.features.groups.as_ref().expect("groups");
                let mut seen: Vec<usize> = a.test_trials.iter().map(|&i| g[i]).collect();
                seen.sort_unstable();
                seen.dedup();
                seen.len()
            }
        }
    }

    /// Run one task. A shuffle `j` permutes the labels within strata (stream `Permutation` (j, 0)) and runs the
    /// recipe's repeats per shuffle on them for every assignment (streams `ShuffleRepeat` (j, b)): the curve's null.
    ///
    /// With the training-label null of the matrix, each of those repeats has a twin (stream `TrainingShuffle`
    /// (j, b)) that trains on the shuffle's *training* labels — a second permutation within strata, drawn once per
    /// shuffle (stream `TrainingLabels` (j, 0)) and shared by its repeats and windows, as the observed labels are
    /// shared by the observed repeats — and tests on the testing trials with their observed labels; the twins' mean
    /// is the shuffle's matrix. Why this is the null of "what was learnt at the training window generalizes": where
    /// the training window carries no information, a decoder trained on permuted labels is distributed as the
    /// observed one, while the testing trials it meets, and their information at the testing window, are the
    /// observed ones, so a chance alignment of a decoder trained on noise with that information is in the null too
    /// (permuting the testing labels as well removes it, and cells trained before any information come out
    /// significant; see README). The training set is balanced by the labels it is trained on; permuting within
    /// level × group keeps every (level, label) cell's size, so the balanced sets are as large as the observed ones.
    pub fn run(&self, task: Task) -> AcrossOutcome {
        let seed = self.recipe.seed;
        let mut out = AcrossOutcome::empty(task);
        let observed = Labels {
            train: &self.data.y,
            test: &self.data.y,
        };
        match task {
            Task::Repeat(i) => {
                for (a, assignment) in self.assignments.iter().enumerate() {
                    let mut rng = task_rng(seed, Stream::Repeat, i as u64, a as u64);
                    let keep = i == 0 && !self.data.features.is_time();
                    let one = self.one_repeat(assignment, observed, &mut rng, true, keep, true);
                    out.push(one);
                }
            }
            Task::Shuffle(j) => {
                let mut rng = task_rng(seed, Stream::Permutation, j as u64, 0);
                let labels = permute_labels(&mut rng, &self.data.y, Some(&self.strata));
                let shuffled = Labels {
                    train: &labels,
                    test: &labels,
                };
                let training = self.training_label_null().then(|| {
                    let mut rng = task_rng(seed, Stream::TrainingLabels, j as u64, 0);
                    permute_labels(&mut rng, &self.data.y, Some(&self.strata))
                });
                let r = self.recipe.shuffle_repeats();
                let n_assign = self.assignments.len();
                for (a, assignment) in self.assignments.iter().enumerate() {
                    let mut total: Option<One> = None;
                    for i in 0..r {
                        let b = (i * n_assign + a) as u64;
                        let mut rng = task_rng(seed, Stream::ShuffleRepeat, j as u64, b);
                        let matrix = training.is_none();
                        let mut one =
                            self.one_repeat(assignment, shuffled, &mut rng, false, false, matrix);
                        if let Some(training) = &training {
                            let mut rng = task_rng(seed, Stream::TrainingShuffle, j as u64, b);
                            let twin = Labels {
                                train: training,
                                test: &self.data.y,
                            };
                            let g = self.one_repeat(assignment, twin, &mut rng, false, false, true);
                            one.matrix = g.matrix;
                            one.fits += g.fits;
                            one.capped += g.capped;
                            one.single_class += g.single_class;
                        }
                        match &mut total {
                            None => total = Some(one),
                            Some(t) => t.add(&one),
                        }
                    }
                    let mut t = total.expect("at least one repeat per shuffle");
                    t.scale(1.0 / r as f64);
                    t.chosen.clear();
                    out.push(t);
                }
            }
        }
        out
    }

    /// The headline score of an accuracy and a balanced accuracy.
    pub fn headline_of(&self, accuracy: f64, balanced_accuracy: f64) -> f64 {
        match self.headline {
            Headline::Accuracy => accuracy,
            Headline::BalancedAccuracy => balanced_accuracy,
        }
    }

    /// Balance both sets, train on one and test on the other at every window (and, with temporal generalization
    /// and `matrix`, at every other window); with `within`, cross-validate within the testing set too; with `keep`,
    /// record every decision.
    fn one_repeat(
        &self,
        a: &Resolved,
        labels: Labels,
        rng: &mut impl RngCore,
        within: bool,
        keep: bool,
        matrix: bool,
    ) -> One {
        let k = self.data.classes.len();
        let nw = self.n_windows();
        let train = self.balanced(&a.train_trials, labels.train, rng);
        let test = self.balanced(&a.test_trials, labels.test, rng);
        let y_train: Vec<usize> = train.iter().map(|&i| labels.train[i]).collect();
        let y_test: Vec<usize> = test.iter().map(|&i| labels.test[i]).collect();
        let within_fold = within.then(|| self.within_fold(a, &test, &y_test, rng));
        // Nested tuning's inner folds within the testing set: a stream of this repeat's own, the same at every window.
        let nesting = Nesting {
            groups: None,
            seed: self.recipe.seed,
            key: rng.next_u64(),
        };
        let p = self.data.features.n_features();
        let mut one = One::new(nw, self.generalize);
        let test_rows: Vec<Vec<f64>> = (0..nw).map(|w| self.rows(w, &test)).collect();
        let mut decisions = keep.then(|| Decisions {
            train: train.clone(),
            test: test.clone(),
            predicted: Vec::new(),
            within_fold: Vec::new(),
            within_predicted: Vec::new(),
        });
        for w in 0..nw {
            let model =
                FittedPipeline::fit(self.decoder.as_ref(), &self.rows(w, &train), p, &y_train, k);
            one.fits += 1;
            one.capped += u32::from(model.hit_iteration_cap());
            one.chosen.extend(model.chosen());
            let targets: Vec<usize> = if self.generalize && matrix {
                (0..nw).collect()
            } else {
                vec![w]
            };
            for w_test in targets {
                let predicted = model.predict(test_rows[w_test].clone());
                let (acc, bacc) = score(&y_test, &predicted, k);
                if w_test == w {
                    one.accuracy[w] = acc;
                    one.balanced_accuracy[w] = bacc;
                    if let Some(d) = &mut decisions {
                        d.predicted = predicted;
                    }
                }
                if self.generalize {
                    one.matrix[w * nw + w_test] = self.headline_of(acc, bacc);
                }
            }
            if let Some((fold, folds)) = &within_fold {
                let set = FoldSet {
                    x: &test_rows[w],
                    p,
                    y: &y_test,
                    fold,
                    folds: *folds,
                    n_classes: k,
                };
                let cv = cross_validate(self.decoder.as_ref(), &set, &nesting, false);
                let (acc, bacc) = score(&y_test, &cv.labels, k);
                one.within_accuracy[w] = acc;
                one.within_balanced_accuracy[w] = bacc;
                one.fits += cv.fits;
                one.capped += cv.capped;
                one.single_class += cv.single_class;
                one.chosen.extend(cv.chosen);
                if let Some(d) = &mut decisions {
                    d.within_fold = fold.clone();
                    d.within_predicted = cv.labels;
                }
            }
        }
        if !within {
            one.within_accuracy.clear();
            one.within_balanced_accuracy.clear();
        }
        one.decisions = decisions;
        one
    }

    /// The trials of a set kept in this repeat: every (level, label) cell undersampled to the smallest, or all.
    fn balanced(&self, trials: &[usize], labels: &[usize], rng: &mut impl RngCore) -> Vec<usize> {
        if !self.recipe.balance {
            return trials.to_vec();
        }
        let k = self.data.classes.len();
        let cells: Vec<usize> = trials
            .iter()
            .map(|&i| self.data.levels[i] * k + labels[i])
            .collect();
        let n_cells = self.data.level_names.len() * k;
        balance(rng, &cells, n_cells)
            .into_iter()
            .map(|pos| trials[pos])
            .collect()
    }

    /// Folds of the within-condition cross-validation of the testing trials.
    fn within_fold(
        &self,
        a: &Resolved,
        test: &[usize],
        y: &[usize],
        rng: &mut impl RngCore,
    ) -> (Vec<usize>, usize) {
        let k = self.data.classes.len();
        let grouped = |rng: &mut _, folds: usize| {
            let g = self.data.features.groups.as_ref().expect("groups");
            let of: Vec<usize> = test.iter().map(|&i| g[i]).collect();
            grouped_folds(rng, &of, self.data.features.group_names.len(), folds)
        };
        match a.within {
            WithinSplit::Stratified { folds } => (stratified_folds(rng, y, k, folds), folds),
            WithinSplit::LeaveOneOut => ((0..test.len()).collect(), test.len()),
            WithinSplit::Grouped { folds } => grouped(rng, folds),
            WithinSplit::LeaveOneGroupOut => grouped(rng, usize::MAX),
        }
    }

    /// Row-major rows of `trials` at window `w` (spike counts again for a decoder of counts on spike events).
    fn rows(&self, w: usize, trials: &[usize]) -> Vec<f64> {
        let mut out = self.data.features.rows(w, trials);
        if let Some(width) = self.count_scale {
            out.iter_mut().for_each(|v| *v = (*v * width).round());
        }
        out
    }
}

/// One assignment's scores in one repeat (or a shuffle's mean over repeats).
struct One {
    accuracy: Vec<f64>,
    balanced_accuracy: Vec<f64>,
    within_accuracy: Vec<f64>,
    within_balanced_accuracy: Vec<f64>,
    matrix: Vec<f64>,
    fits: u32,
    capped: u32,
    single_class: u32,
    chosen: Vec<Setting>,
    decisions: Option<Decisions>,
}

impl One {
    fn new(nw: usize, generalize: bool) -> One {
        One {
            accuracy: vec![0.0; nw],
            balanced_accuracy: vec![0.0; nw],
            within_accuracy: vec![0.0; nw],
            within_balanced_accuracy: vec![0.0; nw],
            matrix: if generalize {
                vec![0.0; nw * nw]
            } else {
                Vec::new()
            },
            fits: 0,
            capped: 0,
            single_class: 0,
            chosen: Vec::new(),
            decisions: None,
        }
    }

    fn add(&mut self, o: &One) {
        for (t, m) in [
            (&mut self.accuracy, &o.accuracy),
            (&mut self.balanced_accuracy, &o.balanced_accuracy),
            (&mut self.matrix, &o.matrix),
        ] {
            for (a, b) in t.iter_mut().zip(m) {
                *a += b;
            }
        }
        self.fits += o.fits;
        self.capped += o.capped;
        self.single_class += o.single_class;
    }

    fn scale(&mut self, f: f64) {
        for v in self
            .accuracy
            .iter_mut()
            .chain(&mut self.balanced_accuracy)
            .chain(&mut self.matrix)
        {
            *v *= f;
        }
    }
}

impl AcrossOutcome {
    fn empty(task: Task) -> AcrossOutcome {
        AcrossOutcome {
            task,
            accuracy: Vec::new(),
            balanced_accuracy: Vec::new(),
            within_accuracy: Vec::new(),
            within_balanced_accuracy: Vec::new(),
            matrix: Vec::new(),
            fits: 0,
            capped_fits: 0,
            single_class_fits: 0,
            chosen: Vec::new(),
            decisions: Vec::new(),
        }
    }

    fn push(&mut self, one: One) {
        self.accuracy.push(one.accuracy);
        self.balanced_accuracy.push(one.balanced_accuracy);
        if !one.within_accuracy.is_empty() {
            self.within_accuracy.push(one.within_accuracy);
            self.within_balanced_accuracy
                .push(one.within_balanced_accuracy);
        }
        if !one.matrix.is_empty() {
            self.matrix.push(one.matrix);
        }
        self.fits += one.fits;
        self.capped_fits += one.capped;
        self.single_class_fits += one.single_class;
        self.chosen.extend(one.chosen);
        self.decisions.extend(one.decisions);
    }
}

/// The labels a repeat trains on and the labels it tests against: the same vector, observed or permuted, except
/// in the matrix's training-label null.
#[derive(Clone, Copy)]
struct Labels<'a> {
    train: &'a [usize],
    test: &'a [usize],
}

/// Accuracy and balanced accuracy of predictions (`usize::MAX` for a trial whose fold had no model counts as wrong).
fn score(y: &[usize], predicted: &[usize], k: usize) -> (f64, f64) {
    let mut confusion = vec![0u32; k * k];
    let mut missing = vec![0u32; k];
    for (&t, &q) in y.iter().zip(predicted) {
        if q < k {
            confusion[t * k + q] += 1;
        } else {
            missing[t] += 1;
        }
    }
    // A trial never predicted is a miss: count it in its row, off the diagonal.
    for (t, &m) in missing.iter().enumerate() {
        confusion[t * k + (t + 1) % k] += m;
    }
    accuracies(&confusion, k)
}

/// Level indices of a named assignment, or an error naming the level that does not occur.
fn level_indices(data: &AcrossData, a: &Assignment) -> Result<(Vec<usize>, Vec<usize>)> {
    let find = |name: &String| {
        data.level_names
            .iter()
            .position(|l| l == name.trim())
            .ok_or_else(|| {
                let levels: Vec<String> =
                    data.level_names.iter().map(|l| format!("'{l}'")).collect();
                Error::Design(format!(
                    "{}: '{}' has no level '{name}'; its levels are: {}",
                    data.features.source,
                    data.across_column,
                    levels.join(", ")
                ))
            })
    };
    let train = a.train.iter().map(find).collect::<Result<Vec<_>>>()?;
    let test = a.test.iter().map(find).collect::<Result<Vec<_>>>()?;
    Ok((train, test))
}

/// Number of balanced dichotomies of `n` levels (each half trained on once): C(n, n/2) for even n, and
/// 2·C(n, ⌊n/2⌋) for odd n (halves of sizes ⌊n/2⌋ and ⌈n/2⌉, either one training).
pub fn dichotomy_count(n: usize) -> usize {
    let choose = |n: usize, k: usize| (0..k).fold(1usize, |c, i| c * (n - i) / (i + 1));
    if n.is_multiple_of(2) {
        choose(n, n / 2)
    } else {
        2 * choose(n, n / 2)
    }
}

/// Every balanced dichotomy of `n` levels as (training levels, testing levels), training halves in lexicographic
/// order: for 4 levels {0,1}|{2,3}, {0,2}|{1,3}, {0,3}|{1,2}, {1,2}|{0,3}, {1,3}|{0,2}, {2,3}|{0,1}.
pub fn balanced_dichotomies(n: usize) -> Vec<(Vec<usize>, Vec<usize>)> {
    let sizes = [n / 2, n - n / 2];
    let mut out: Vec<Vec<usize>> = (1u64..(1u64 << n) - 1)
        .map(|mask| {
            (0..n)
                .filter(|&i| mask >> i & 1 == 1)
                .collect::<Vec<usize>>()
        })
        .filter(|s| sizes.contains(&s.len()))
        .collect();
    out.sort();
    out.into_iter()
        .map(|train| {
            let test = (0..n).filter(|i| !train.contains(i)).collect();
            (train, test)
        })
        .collect()
}

/// Check one assignment against the trials: every level of each set holds every class, and the testing set can be
/// split for the within-condition score.
fn resolve(
    data: &AcrossData,
    recipe: &Recipe,
    train: Vec<usize>,
    test: Vec<usize>,
) -> Result<Resolved> {
    let src = &data.features.source;
    let counts = data.cell_counts();
    let k = data.classes.len();
    let mut per_cell = [usize::MAX; 2];
    for (s, set) in [&train, &test].into_iter().enumerate() {
        for &l in set {
            for (c, &count) in counts[l].iter().enumerate() {
                if count == 0 {
                    return Err(Error::Design(format!(
                        "{src}: level '{}' of '{}' has no trial of '{}'; every level used for training or testing \
                         needs trials of every class of '{}'",
                        data.level_names[l], data.across_column, data.classes[c], data.label_column
                    )));
                }
                per_cell[s] = per_cell[s].min(count);
            }
        }
    }
    let members = |set: &[usize]| -> Vec<usize> {
        (0..data.levels.len())
            .filter(|&i| set.contains(&data.levels[i]))
            .collect()
    };
    let (train_trials, test_trials) = (members(&train), members(&test));
    let size = |set: &[usize], trials: &[usize], m: usize| {
        if recipe.balance {
            m * k * set.len()
        } else {
            trials.len()
        }
    };
    let (train_size, test_size) = (
        size(&train, &train_trials, per_cell[0]),
        size(&test, &test_trials, per_cell[1]),
    );
    let names = |set: &[usize]| {
        set.iter()
            .map(|&l| format!("'{}'", data.level_names[l]))
            .collect::<Vec<_>>()
            .join(", ")
    };
    let within = match (&data.features.groups, recipe.folds) {
        (Some(g), folds) => {
            let mut seen: Vec<usize> = test_trials.iter().map(|&i| g[i]).collect();
            seen.sort_unstable();
            seen.dedup();
            if seen.len() < 2 {
                return Err(Error::Design(format!(
                    "{src}: the testing levels {} hold a single level of the group column '{}', so the \
                     within-condition score cannot be cross-validated by group there; choose other levels or no group",
                    names(&test),
                    data.features.group_column.as_deref().unwrap_or("")
                )));
            }
            match folds {
                Folds::K(f) if f < seen.len() => WithinSplit::Grouped { folds: f },
                _ => WithinSplit::LeaveOneGroupOut,
            }
        }
        (None, Folds::LeaveOneOut) => WithinSplit::LeaveOneOut,
        (None, Folds::K(f)) if f >= test_size => WithinSplit::LeaveOneOut,
        (None, Folds::K(f)) => {
            let smallest = if recipe.balance {
                per_cell[1] * test.len()
            } else {
                (0..k)
                    .map(|c| test.iter().map(|&l| counts[l][c]).sum::<usize>())
                    .min()
                    .unwrap_or(0)
            };
            if smallest < f {
                return Err(Error::Design(format!(
                    "{src}: the testing levels {} have {smallest} trials of some class, fewer than the {f} folds of \
                     the within-condition score; choose {} or fewer folds",
                    names(&test),
                    smallest.max(2)
                )));
            }
            WithinSplit::Stratified { folds: f }
        }
    };
    Ok(Resolved {
        train,
        test,
        train_trials,
        test_trials,
        train_per_cell: per_cell[0],
        test_per_cell: per_cell[1],
        train_size,
        test_size,
        within,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dichotomies_of_two_three_and_four_levels() {
        assert_eq!(
            balanced_dichotomies(2),
            vec![(vec![0], vec![1]), (vec![1], vec![0])]
        );
        let three = balanced_dichotomies(3);
        assert_eq!(three.len(), dichotomy_count(3));
        assert_eq!(three[0], (vec![0], vec![1, 2]));
        assert_eq!(three[1], (vec![0, 1], vec![2]));
        let four = balanced_dichotomies(4);
        assert_eq!(four.len(), 6);
        assert_eq!(four[2], (vec![0, 3], vec![1, 2]));
        assert_eq!(dichotomy_count(10), 252);
        assert_eq!(dichotomy_count(11), 924);
    }
}
