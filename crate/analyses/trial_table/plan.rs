//! The trial-table plan: a recipe checked against a dataset, its tasks, and how one task runs.

use crate::analyses::resolve_scheme;
use crate::data::Dataset;
use crate::decoders::{
    self, check_counts, cross_validate, CrossValidated, Decoder, FoldSet, Nesting,
};
use crate::error::{Error, Result};
use crate::recipe::{limits, Recipe, Setting};
use crate::resample::score::accuracies;
use crate::resample::{permute_labels, pseudo, single_group_folds, Scheme, Split, Task};
use crate::rng::{task_rng, Stream};
use crate::stats::roc;
use rand_core::RngCore;
use serde::{Deserialize, Serialize};
use std::borrow::Cow;

/// One task of a trial-table analysis: a repeat or shuffle of the analysis of every class, or of one pair of
/// classes decoded on its own (with pairwise decoding). Serialised untagged, so that a task of the whole analysis
/// reads exactly as a [`Task`] does.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(untagged)]
pub enum TableTask {
    Whole(Task),
    /// `pair` indexes [`Plan::pairs`].
    Pair {
        pair: usize,
        task: Task,
    },
}

impl From<Task> for TableTask {
    fn from(task: Task) -> TableTask {
        TableTask::Whole(task)
    }
}

/// What a task produced. For a shuffle, scores are means over its repeats and the confusion matrix is left empty.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Outcome {
    pub task: Task,
    /// The pair of classes (index into [`Plan::pairs`]) whose analysis ran the task; none for the whole analysis.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pair: Option<usize>,
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
    /// Per class, the recall (fraction of the class's test trials predicted as it); for a shuffle, the mean over its
    /// repeats.
    #[serde(default)]
    pub recall: Vec<f64>,
    /// Observed repeats: accuracy and balanced accuracy of each fold's test trials, in fold order (folds with no
    /// test trial or no model left out), for the confidence interval.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub fold_accuracy: Vec<f64>,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub fold_balanced_accuracy: Vec<f64>,
    /// Observed repeats of a two-class problem: the area under the ROC curve of the repeat's decision values,
    /// pooled over its test folds.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub auc: Option<f64>,
    /// With tuning and groups: fits whose training fold held a single group, so that its inner folds could not be
    /// grouped.
    #[serde(default, skip_serializing_if = "is_zero")]
    pub ungrouped_inner: u32,
}

fn is_zero(v: &u32) -> bool {
    *v == 0
}

/// One pair of classes decoded on its own, with the same protocol.
pub struct Pair {
    /// The two classes, as indices into the whole analysis's classes (ascending).
    pub classes: [usize; 2],
    pub plan: Plan,
}

/// A recipe checked against a dataset, ready to run tasks. The plan owns its data, so a face can keep it for as
/// long as it hands out tasks (a page worker keeps one per run).
pub struct Plan {
    pub data: Dataset,
    pub recipe: Recipe,
    pub scheme: Scheme,
    /// With pairwise decoding (three or more classes): every pair of classes, in order (0, 1), (0, 2), … (1, 2), …
    pub pairs: Vec<Pair>,
    decoder: Box<dyn Decoder>,
}

impl Plan {
    pub fn new(mut data: Dataset, recipe: &Recipe) -> Result<Plan> {
        // The fits read the matrix as one row-major slice ([`Plan::x`]); a table read from a file already is.
        if !data.x.is_standard_layout() {
            data.x = data.x.as_standard_layout().into_owned().into_shared();
        }
        let mut scheme = resolve_scheme(&data.trials(), recipe)?;
        let (folds, classes) = (scheme.folds() as f64, data.classes.len() as f64);
        // Kept per observed repeat: two scores, the confusion counts and, with tuning, a setting per fold.
        let per_repeat = 2.0 + classes * classes + if recipe.tune { folds } else { 0.0 };
        limits::check_work(
            folds * recipe.shuffle_repeats().max(1) as f64,
            recipe.repeats as f64 * per_repeat + recipe.shuffles as f64 * 2.0,
        )?;
        let mut warnings = data.warnings.clone();
        warnings.append(&mut scheme.warnings);
        scheme.warnings = warnings;
        scheme.warnings.extend(check_counts(
            recipe.classifier,
            data.x.as_slice().expect("standard layout, made so above"),
            &data.feature_names,
            &data.source,
        )?);
        scheme.warnings.extend(decoders::features_note(
            recipe.classifier,
            data.n_features(),
        ));
        let pairs = if recipe.pairwise && data.classes.len() > 2 {
            pairs_of(&data, recipe)?
        } else {
            if recipe.pairwise {
                scheme.warnings.push(
                    "pairwise decoding needs three or more classes; with two, the analysis is the pair".into(),
                );
            }
            Vec::new()
        };
        Ok(Plan {
            data,
            recipe: scheme.repeats_to_run(recipe),
            scheme,
            pairs,
            decoder: decoders::build(recipe.classifier, recipe.c, recipe.tune),
        })
    }

    /// The trials × features matrix, row-major: the dataset's own (a large table is never held twice).
    fn x(&self) -> &[f64] {
        self.data
            .x
            .as_slice()
            .expect("standard layout, made so in Plan::new")
    }

    /// Every task of the analysis, repeats first, in index order; then every pair's, pair by pair.
    pub fn tasks(&self) -> Vec<TableTask> {
        let whole = Task::all(self.recipe.repeats, self.recipe.shuffles)
            .into_iter()
            .map(TableTask::Whole);
        let pairs = self.pairs.iter().enumerate().flat_map(|(pair, p)| {
            Task::all(p.plan.recipe.repeats, p.plan.recipe.shuffles)
                .into_iter()
                .map(move |task| TableTask::Pair { pair, task })
        });
        whole.chain(pairs).collect()
    }

    /// Fits one task performs (for progress bars): folds × repeats.
    pub fn fits_in(&self, task: impl Into<TableTask>) -> usize {
        let (plan, task) = match task.into() {
            TableTask::Whole(task) => (self, task),
            TableTask::Pair { pair, task } => (&self.pairs[pair].plan, task),
        };
        let folds = plan.scheme.folds();
        match task {
            Task::Repeat(_) => folds,
            Task::Shuffle(_) => folds * plan.recipe.shuffle_repeats(),
        }
    }

    pub fn run(&self, task: impl Into<TableTask>) -> Outcome {
        match task.into() {
            TableTask::Whole(task) => self.run_whole(task),
            TableTask::Pair { pair, task } => Outcome {
                pair: Some(pair),
                ..self.pairs[pair].plan.run_whole(task)
            },
        }
    }

    fn run_whole(&self, task: Task) -> Outcome {
        let seed = self.recipe.seed;
        match task {
            Task::Repeat(i) => {
                let mut rng = task_rng(seed, Stream::Repeat, i as u64, 0);
                let mut out = self.one_repeat(&self.data.y, &mut rng, true);
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
                total.recall = vec![0.0; self.data.classes.len()];
                for i in 0..r {
                    let mut rng = task_rng(seed, Stream::ShuffleRepeat, j as u64, i as u64);
                    let o = self.one_repeat(&labels, &mut rng, false);
                    total.accuracy += o.accuracy;
                    total.balanced_accuracy += o.balanced_accuracy;
                    total.fits += o.fits;
                    total.capped_fits += o.capped_fits;
                    total.single_class_fits += o.single_class_fits;
                    total.ungrouped_inner += o.ungrouped_inner;
                    for (t, v) in total.recall.iter_mut().zip(&o.recall) {
                        *t += v;
                    }
                }
                total.accuracy /= r as f64;
                total.balanced_accuracy /= r as f64;
                total.recall.iter_mut().for_each(|v| *v /= r as f64);
                total
            }
        }
    }

    /// The headline score of an outcome.
    pub fn headline_score(&self, o: &Outcome) -> f64 {
        self.scheme.headline_of(o.accuracy, o.balanced_accuracy)
    }

    /// One repeat's draw, fits and scores; `observed` repeats also keep each fold's scores and decision values.
    fn one_repeat(&self, labels: &[usize], rng: &mut impl RngCore, observed: bool) -> Outcome {
        let n_classes = self.data.classes.len();
        let p = self.data.n_features();
        let (x, y, fold, folds, groups) = match self.scheme.split {
            Split::Pseudo { folds } => {
                let (x, y, fold) = pseudo::build(&self.data, self.x(), labels, folds, rng);
                (Cow::Owned(x), y, fold, folds, None)
            }
            _ => {
                let draw = self.scheme.draw(labels, self.data.groups.as_deref(), rng);
                let groups = self
                    .data
                    .groups
                    .as_ref()
                    .map(|g| draw.used.iter().map(|&i| g[i]).collect::<Vec<usize>>());
                (self.rows(&draw.used), draw.y, draw.fold, draw.folds, groups)
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
        // Nested tuning's inner folds get a stream of their own, keyed by a draw from this task's stream made after
        // the split (so the split is what it always was).
        let nesting = Nesting {
            groups: groups.as_deref(),
            seed: self.recipe.seed,
            key: rng.next_u64(),
        };
        let predicted = cross_validate(self.decoder.as_ref(), &set, &nesting, observed);
        let mut out = score(&y, &fold, folds, predicted, n_classes, observed);
        if self.recipe.tune {
            out.ungrouped_inner = single_group_folds(groups.as_deref(), &fold, folds) as u32;
        }
        out
    }

    /// Row-major rows of the trials `used`, in that order: the matrix itself when that is every trial in order
    /// (balanced classes, or no balancing), so a run on a large table holds one copy of it, not two.
    fn rows(&self, used: &[usize]) -> Cow<'_, [f64]> {
        let x = self.x();
        if used.len() == self.data.n_trials() && used.iter().enumerate().all(|(k, &i)| k == i) {
            return Cow::Borrowed(x);
        }
        let p = self.data.n_features();
        let mut out = Vec::with_capacity(used.len() * p);
        for &i in used {
            out.extend_from_slice(&x[i * p..(i + 1) * p]);
        }
        Cow::Owned(out)
    }
}

/// The plan of every pair of classes, each on the trials of its two classes only, with the recipe's protocol.
fn pairs_of(data: &Dataset, recipe: &Recipe) -> Result<Vec<Pair>> {
    let mut recipe = recipe.clone();
    recipe.pairwise = false;
    let k = data.classes.len();
    let mut pairs = Vec::new();
    for a in 0..k {
        for b in a + 1..k {
            let plan = Plan::new(data.with_classes(&[a, b]), &recipe).map_err(|e| {
                Error::Design(format!(
                    "pairwise decoding of '{}' and '{}': {e}",
                    data.classes[a], data.classes[b]
                ))
            })?;
            pairs.push(Pair {
                classes: [a, b],
                plan,
            });
        }
    }
    Ok(pairs)
}

impl Outcome {
    fn empty() -> Outcome {
        Outcome {
            task: Task::Repeat(0),
            pair: None,
            accuracy: 0.0,
            balanced_accuracy: 0.0,
            confusion: Vec::new(),
            fits: 0,
            capped_fits: 0,
            single_class_fits: 0,
            chosen: Vec::new(),
            recall: Vec::new(),
            fold_accuracy: Vec::new(),
            fold_balanced_accuracy: Vec::new(),
            auc: None,
            ungrouped_inner: 0,
        }
    }
}

/// Pool predictions into a confusion matrix, accuracy, balanced accuracy and per-class recall; with `per_fold`,
/// also each fold's scores and (two classes) the AUC of the decision values pooled over folds.
fn score(
    y: &[usize],
    fold: &[usize],
    folds: usize,
    predicted: CrossValidated,
    n_classes: usize,
    per_fold: bool,
) -> Outcome {
    let confusion_of = |rows: &mut dyn Iterator<Item = usize>| {
        let mut flat = vec![0u32; n_classes * n_classes];
        for i in rows {
            flat[y[i] * n_classes + predicted.labels[i]] += 1;
        }
        flat
    };
    let flat = confusion_of(&mut (0..y.len()));
    let (accuracy, balanced_accuracy) = accuracies(&flat, n_classes);
    let recall = flat
        .chunks(n_classes)
        .enumerate()
        .map(|(c, row)| {
            let total: u32 = row.iter().sum();
            if total > 0 {
                row[c] as f64 / total as f64
            } else {
                0.0
            }
        })
        .collect();
    let (mut fold_accuracy, mut fold_balanced_accuracy) = (Vec::new(), Vec::new());
    if per_fold {
        for f in 0..folds {
            let mut rows =
                (0..y.len()).filter(|&i| fold[i] == f && predicted.labels[i] != usize::MAX);
            let c = confusion_of(&mut rows);
            if c.iter().any(|&v| v > 0) {
                let (a, b) = accuracies(&c, n_classes);
                fold_accuracy.push(a);
                fold_balanced_accuracy.push(b);
            }
        }
    }
    let auc = if predicted.decision.is_empty() {
        None
    } else {
        let scored: Vec<usize> = (0..y.len())
            .filter(|&i| !predicted.decision[i].is_nan())
            .collect();
        let values: Vec<f64> = scored.iter().map(|&i| predicted.decision[i]).collect();
        let positive: Vec<bool> = scored.iter().map(|&i| y[i] == 1).collect();
        roc::auc(&values, &positive)
    };
    Outcome {
        task: Task::Repeat(0),
        pair: None,
        accuracy,
        balanced_accuracy,
        confusion: flat.chunks(n_classes).map(<[u32]>::to_vec).collect(),
        fits: predicted.fits,
        capped_fits: predicted.capped,
        single_class_fits: predicted.single_class,
        chosen: predicted.chosen,
        recall,
        fold_accuracy,
        fold_balanced_accuracy,
        auc,
        ungrouped_inner: 0,
    }
}
