//! The trial-table plan: a recipe checked against a dataset, its tasks, and how one task runs.

use crate::analyses::resolve_scheme;
use crate::data::Dataset;
use crate::decoders::{self, check_counts, cross_validate, CrossValidated, Decoder, FoldSet};
use crate::error::Result;
use crate::recipe::{limits, Recipe, Setting};
use crate::resample::score::accuracies;
use crate::resample::{permute_labels, pseudo, Scheme, Split, Task};
use crate::rng::{task_rng, Stream};
use rand_core::RngCore;
use serde::{Deserialize, Serialize};

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

/// A recipe checked against a dataset, ready to run tasks. The plan owns its data, so a face can keep it for as
/// long as it hands out tasks (a page worker keeps one per run).
pub struct Plan {
    pub data: Dataset,
    pub recipe: Recipe,
    pub scheme: Scheme,
    decoder: Box<dyn Decoder>,
    /// The trials × features matrix, row-major.
    x: Vec<f64>,
}

impl Plan {
    pub fn new(data: Dataset, recipe: &Recipe) -> Result<Plan> {
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
            decoder: decoders::build(recipe.classifier, recipe.c, recipe.tune),
            x,
        })
    }

    /// Every task of the analysis, repeats first, in index order.
    pub fn tasks(&self) -> Vec<Task> {
        Task::all(self.recipe.repeats, self.recipe.shuffles)
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
                let (x, y, fold) = pseudo::build(&self.data, &self.x, labels, folds, rng);
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
        score(&y, cross_validate(self.decoder.as_ref(), &set), n_classes)
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
fn score(y: &[usize], predicted: CrossValidated, n_classes: usize) -> Outcome {
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
