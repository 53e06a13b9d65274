//! The decoding protocol at every window, cut into the same independent tasks as a single-window analysis.
//!
//! A repeat draws its balancing and folds once, from the same random stream a trial-table analysis would use, and
//! applies them to every window: labels belong to trials, not to windows, so sharing the split is what makes the
//! windows comparable (and it is what makes window `w` of a time course equal, number for number, to a trial-table
//! analysis of window `w` alone). Within each fold and window the pipeline (standardisation + decoder) is fitted on
//! the training trials of that window only. With temporal generalization, the decoder fitted at window `w`
//! predicts the same held-out trials at every window, so the matrix's diagonal is the decoding curve itself.
//!
//! A shuffle permutes the labels once (within groups when groups are set) and runs the recipe's repeats per
//! shuffle over every window, so one permutation is used at every window: what the cluster test needs.

use super::pooled::Pool;
use crate::analyses::resolve_scheme;
use crate::data::time::TimeDataset;
use crate::data::trials::Trials;
use crate::decoders::{
    self, check_counts, fit_folds_with, Decoder, FittedPipeline, FoldSet, Nesting,
};
use crate::error::{Error, Result};
use crate::recipe::{limits, GeneralizationNull, Recipe, Setting, TimeInput, TimeSettings};
use crate::resample::score::accuracies;
use crate::resample::{permute_labels, single_group_folds, Draw, Scheme, Task};
use crate::rng::{task_rng, Stream};
use rand_core::RngCore;
use serde::{Deserialize, Serialize};

/// What a task produced at every window. For a shuffle, scores are means over its repeats.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TimeOutcome {
    pub task: Task,
    /// Per window.
    pub accuracy: Vec<f64>,
    pub balanced_accuracy: Vec<f64>,
    /// Headline score with training window as row and testing window as column, row-major; empty unless the
    /// recipe asks for temporal generalization.
    #[serde(default)]
    pub generalization: Vec<f64>,
    pub fits: u32,
    pub capped_fits: u32,
    pub single_class_fits: u32,
    /// With tuning, the setting chosen in each fit of an observed repeat (window by window, folds in order).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub chosen: Vec<Setting>,
    /// With tuning and groups: fits whose training fold held a single group, so that its inner folds could not be
    /// grouped.
    #[serde(default, skip_serializing_if = "is_zero")]
    pub ungrouped_inner: u32,
}

fn is_zero(v: &u32) -> bool {
    *v == 0
}

/// A time-resolved recipe checked against a recording (which it owns, like the trial-table plan).
pub struct TimePlan {
    pub data: TimeDataset,
    pub recipe: Recipe,
    pub settings: TimeSettings,
    pub scheme: Scheme,
    decoder: Box<dyn Decoder>,
    /// For a decoder of counts on spike events: the window width, which turns the rates back into exact counts.
    count_scale: Option<f64>,
    /// Pseudo-populations: the sessions whose neurons are pooled (`data` then describes the pooled population and
    /// holds no activity).
    pool: Option<Pool>,
}

impl TimePlan {
    pub fn new(data: TimeDataset, recipe: &Recipe) -> Result<TimePlan> {
        let settings = recipe.time.clone().ok_or_else(|| {
            Error::Recipe("this recipe has no time settings; it is for a trial table".into())
        })?;
        let mut scheme = resolve_scheme(&data.trials(), recipe)?;
        // A binned table's windows are its bins, known only now; spike events' and NWB windows were checked with
        // the recipe already.
        check_limits(data.windows.len(), &settings, &scheme, recipe)?;
        let count_scale = count_scale(&settings, recipe);
        let counts_note = check_counts(
            recipe.classifier,
            data.x.as_slice().expect("standard layout"),
            &data.neurons,
            &data.source,
        )?
        .filter(|_| count_scale.is_none());
        let mut warnings = data.warnings.clone();
        warnings.append(&mut scheme.warnings);
        warnings.extend(counts_note);
        warnings.extend(decoders::features_note(recipe.classifier, data.n_neurons()));
        scheme.warnings = warnings;
        // The recipe as it runs: the generalization matrix's null is written out when the matrix is made, so that
        // a saved recipe keeps its meaning whatever the default.
        Ok(TimePlan::assemble(
            data,
            recipe,
            settings,
            scheme,
            count_scale,
            None,
        ))
    }

    /// Neurons recorded in separate sessions, pooled into one pseudo-population: each repeat builds pseudo-trials
    /// within folds from disjoint real trials of every session ([`crate::resample::pseudo`]), and the windows are
    /// decoded as for one recording. `sessions` are (name, recording) with the same windows and classes.
    pub fn pooled(sessions: Vec<(String, TimeDataset)>, recipe: &Recipe) -> Result<TimePlan> {
        let settings = recipe.time.clone().ok_or_else(|| {
            Error::Recipe("this recipe has no time settings; it is for a trial table".into())
        })?;
        let (data, pool) = Pool::new(sessions)?;
        let trials = Trials {
            pseudo: true,
            ..data.trials()
        };
        let mut scheme = resolve_scheme(&trials, recipe)?;
        check_limits(data.windows.len(), &settings, &scheme, recipe)?;
        let count_scale = count_scale(&settings, recipe);
        let mut warnings = data.warnings.clone();
        warnings.append(&mut scheme.warnings);
        warnings.extend(decoders::features_note(recipe.classifier, data.n_neurons()));
        for s in &pool.sessions {
            let x = s.x.as_slice().expect("standard layout");
            let note = check_counts(recipe.classifier, x, &s.neurons, &s.source)?;
            if let Some(n) = note.filter(|_| count_scale.is_none()) {
                warnings.push(n);
            }
        }
        scheme.warnings = warnings;
        Ok(TimePlan::assemble(
            data,
            recipe,
            settings,
            scheme,
            count_scale,
            Some(pool),
        ))
    }

    /// The plan as it runs, from either constructor: the recipe with the repeats that will run and, when the
    /// generalization matrix is made, its null written out, so that a saved recipe keeps its meaning whatever the
    /// default.
    fn assemble(
        data: TimeDataset,
        recipe: &Recipe,
        mut settings: TimeSettings,
        scheme: Scheme,
        count_scale: Option<f64>,
        pool: Option<Pool>,
    ) -> TimePlan {
        let decoder = decoders::build(recipe.classifier, recipe.c, recipe.tune);
        let mut recipe = scheme.repeats_to_run(recipe);
        if settings.generalize {
            settings.generalization_null = Some(settings.generalization_null());
        }
        recipe.time = Some(settings.clone());
        TimePlan {
            data,
            recipe,
            settings,
            scheme,
            decoder,
            count_scale,
            pool,
        }
    }

    pub fn n_windows(&self) -> usize {
        self.data.windows.len()
    }

    /// Every task, repeats first, in index order.
    pub fn tasks(&self) -> Vec<Task> {
        Task::all(self.recipe.repeats, self.recipe.shuffles)
    }

    /// Fits one task performs (for progress): folds × windows, times the repeats of a shuffle, plus those of the
    /// generalization matrix's training-label null, which fits its own decoders ([`TimePlan::matrix_null_repeats`]).
    pub fn fits_in(&self, task: Task) -> usize {
        let per_repeat = self.scheme.folds() * self.n_windows();
        match task {
            Task::Repeat(_) => per_repeat,
            Task::Shuffle(_) => {
                per_repeat * (self.recipe.shuffle_repeats() + self.matrix_null_repeats())
            }
        }
    }

    /// Repeats of the generalization matrix's training-label null in one shuffle: as many as the curve's, or one
    /// with pseudo-trials (see [`TimePlan::training_label_repeat`]); none with any other null.
    fn matrix_null_repeats(&self) -> usize {
        match (self.training_label_null(), &self.pool) {
            (false, _) => 0,
            (true, None) => self.recipe.shuffle_repeats(),
            (true, Some(_)) => self.recipe.shuffle_repeats().min(1),
        }
    }

    /// Whether the generalization matrix's null permutes only the training labels (and so is run apart from the
    /// curve's).
    fn training_label_null(&self) -> bool {
        self.settings.generalize
            && self.settings.generalization_null() == GeneralizationNull::TrainingLabels
    }

    pub fn run(&self, task: Task) -> TimeOutcome {
        let seed = self.recipe.seed;
        let groups = self.data.groups.as_deref();
        match task {
            Task::Repeat(i) => {
                let mut rng = task_rng(seed, Stream::Repeat, i as u64, 0);
                let mut out = self.repeat(&self.data.y, &mut rng, self.settings.generalize);
                out.task = task;
                out
            }
            Task::Shuffle(j) => {
                let mut rng = task_rng(seed, Stream::Permutation, j as u64, 0);
                let labels = permute_labels(&mut rng, &self.data.y, groups);
                let r = self.recipe.shuffle_repeats();
                let training_null = self.training_label_null();
                // The matrix's training-label null: one set of training labels per shuffle, shared by its
                // repeats as the observed labels are shared by the observed repeats, and its own mean.
                let training = (training_null && self.pool.is_none()).then(|| {
                    let mut rng = task_rng(seed, Stream::TrainingLabels, j as u64, 0);
                    permute_labels(&mut rng, &self.data.y, groups)
                });
                let null_repeats = self.matrix_null_repeats();
                let mut matrix_sum: Vec<f64> = Vec::new();
                let mut total: Option<TimeOutcome> = None;
                for i in 0..r {
                    let mut rng = task_rng(seed, Stream::ShuffleRepeat, j as u64, i as u64);
                    let matrix = self.settings.generalize && !training_null;
                    let mut o = self.repeat(&labels, &mut rng, matrix);
                    if i < null_repeats {
                        let g = self.training_label_repeat(j, i, training.as_deref());
                        if matrix_sum.is_empty() {
                            matrix_sum = g.generalization;
                        } else {
                            add(&mut matrix_sum, &g.generalization);
                        }
                        o.fits += g.fits;
                        o.capped_fits += g.capped_fits;
                        o.single_class_fits += g.single_class_fits;
                        o.ungrouped_inner += g.ungrouped_inner;
                    }
                    match &mut total {
                        None => total = Some(o),
                        Some(t) => {
                            add(&mut t.accuracy, &o.accuracy);
                            add(&mut t.balanced_accuracy, &o.balanced_accuracy);
                            add(&mut t.generalization, &o.generalization);
                            t.fits += o.fits;
                            t.capped_fits += o.capped_fits;
                            t.single_class_fits += o.single_class_fits;
                            t.ungrouped_inner += o.ungrouped_inner;
                        }
                    }
                }
                let mut t = total.expect("at least one repeat per shuffle");
                t.chosen.clear();
                for v in t
                    .accuracy
                    .iter_mut()
                    .chain(&mut t.balanced_accuracy)
                    .chain(&mut t.generalization)
                {
                    *v /= r as f64;
                }
                if training_null {
                    t.generalization = matrix_sum
                        .into_iter()
                        .map(|v| v / null_repeats as f64)
                        .collect();
                }
                t.task = task;
                t
            }
        }
    }

    /// One repeat of a shuffle of the generalization matrix's training-label null: balancing and folds drawn from
    /// the observed labels (stream `TrainingShuffle` (j, i)), every fold's decoder at every window fitted on the
    /// shuffle's `training` labels of its training trials and tested against the observed labels of its test
    /// trials.
    ///
    /// Why this is the null of "what was learnt at the training window generalizes": when a training window
    /// carries no information, its trials' activity is independent of their labels, so a decoder fitted on
    /// permuted labels is distributed as the observed one, while the test trials it meets, and their information
    /// at the testing window, are the observed ones; a chance alignment of a decoder trained on noise with the
    /// information at the testing window is thus in the null too.
    ///
    /// The `training` labels are one permutation of the observed labels (within groups, with groups) drawn once
    /// per shuffle (stream `TrainingLabels` (j, 0)) and shared by all the shuffle's repeats, folds and windows, as
    /// the observed labels are shared by all the observed repeats. A chance alignment of the observed labels
    /// with the noise recurs in every observed repeat and so survives their mean; the null's must recur the same
    /// way. A new permutation in each repeat (as this null once drew, within each fold) averages such alignments
    /// away over the shuffle's repeats, so the null came out narrower than the observed mean's spread and cells
    /// trained without information came out significant (the sample's time course with 100 repeats and 10 repeats
    /// per shuffle: a cluster trained at −0.45 to −0.3 s).
    ///
    /// With pseudo-trials (`training` is `None`) there are no fixed training trials to label: each pseudo-trial is
    /// dealt anew in every repeat. Each shuffle then runs this null for one repeat only (labels permuted within
    /// each fold of that repeat's pseudo-trials), so its spread holds all the variability of one repeat: wider
    /// than the observed mean's under no information, a conservative test.
    fn training_label_repeat(&self, j: usize, i: usize, training: Option<&[usize]>) -> TimeOutcome {
        let groups = self.data.groups.as_deref();
        let mut rng = task_rng(
            self.recipe.seed,
            Stream::TrainingShuffle,
            j as u64,
            i as u64,
        );
        if let Some(pool) = &self.pool {
            // Pseudo-trials: drawn from the observed labels, permuted within each fold.
            let k = self.data.classes.len();
            let draw = pool.draw(&self.data.y, self.scheme.folds(), k, &mut rng);
            let permuted = permute_labels(&mut rng, &draw.y, Some(&draw.fold));
            let rows = |w: usize, positions: &[usize]| pool.rows(&draw, w, positions);
            let drawn = Drawn {
                y: &draw.y,
                fold: &draw.fold,
                folds: draw.folds,
                groups: None,
                rows: &rows,
            };
            return self.one_repeat(&drawn, rng.next_u64(), true, Some(&permuted));
        }
        let training = training.expect("fixed training labels without pseudo-trials");
        let draw = self.scheme.draw(&self.data.y, groups, &mut rng);
        let permuted: Vec<usize> = draw.used.iter().map(|&t| training[t]).collect();
        self.decode_draw(&draw, rng.next_u64(), true, Some(&permuted))
    }

    /// The headline score at each window of an outcome.
    pub fn headline_scores(&self, o: &TimeOutcome) -> Vec<f64> {
        o.accuracy
            .iter()
            .zip(&o.balanced_accuracy)
            .map(|(&a, &b)| self.scheme.headline_of(a, b))
            .collect()
    }

    /// One repeat for `labels` (observed or permuted): balance and split the trials (or build pseudo-trials), then
    /// decode every window (and, with `matrix`, test every window's decoder at every window). The draw comes first
    /// from `rng`, then the key of nested tuning's inner folds.
    fn repeat(&self, labels: &[usize], rng: &mut impl RngCore, matrix: bool) -> TimeOutcome {
        match &self.pool {
            None => {
                let draw = self.scheme.draw(labels, self.data.groups.as_deref(), rng);
                self.decode_draw(&draw, rng.next_u64(), matrix, None)
            }
            Some(pool) => {
                let draw = pool.draw(labels, self.scheme.folds(), self.data.classes.len(), rng);
                let rows = |w: usize, positions: &[usize]| pool.rows(&draw, w, positions);
                let drawn = Drawn {
                    y: &draw.y,
                    fold: &draw.fold,
                    folds: draw.folds,
                    groups: None,
                    rows: &rows,
                };
                self.one_repeat(&drawn, rng.next_u64(), matrix, None)
            }
        }
    }

    /// [`TimePlan::one_repeat`] on a draw of this recording's own trials.
    fn decode_draw(
        &self,
        draw: &Draw,
        inner_key: u64,
        matrix: bool,
        train_y: Option<&[usize]>,
    ) -> TimeOutcome {
        let p = self.data.n_neurons();
        let rows = |w: usize, positions: &[usize]| {
            let x = self.data.window(w);
            let mut out = Vec::with_capacity(positions.len() * p);
            for &pos in positions {
                let i = draw.used[pos];
                out.extend_from_slice(&x[i * p..(i + 1) * p]);
            }
            out
        };
        let groups: Option<Vec<usize>> = self
            .data
            .groups
            .as_ref()
            .map(|g| draw.used.iter().map(|&i| g[i]).collect());
        let drawn = Drawn {
            y: &draw.y,
            fold: &draw.fold,
            folds: draw.folds,
            groups: groups.as_deref(),
            rows: &rows,
        };
        self.one_repeat(&drawn, inner_key, matrix, train_y)
    }

    /// Cross-validate one draw at every window (and, with `matrix`, test every window's decoder at every window).
    /// All folds of a window are fitted together, so a decoder with a fold shortcut can use it. Decoders are fitted
    /// on `train_y` when given (the training-label null) and on the draw's labels otherwise; tests always score
    /// against the draw's labels. Nested tuning's inner folds come from the stream keyed by `inner_key` (the same
    /// at every window).
    fn one_repeat(
        &self,
        drawn: &Drawn,
        inner_key: u64,
        matrix: bool,
        train_y: Option<&[usize]>,
    ) -> TimeOutcome {
        let data = &self.data;
        let Drawn {
            y,
            fold,
            folds,
            groups,
            rows,
        } = *drawn;
        let nesting = Nesting {
            groups,
            seed: self.recipe.seed,
            key: inner_key,
        };
        let (nw, k, p) = (self.n_windows(), data.classes.len(), data.n_neurons());
        let generalize = matrix;
        let gather = |w: usize, positions: &[usize]| {
            let mut out = rows(w, positions);
            if let Some(width) = self.count_scale {
                // Rates × width: spike counts, rounded to undo the division's round-off.
                out.iter_mut().for_each(|v| *v = (*v * width).round());
            }
            out
        };
        let all: Vec<usize> = (0..y.len()).collect();
        // models[w][f]: the pipeline trained at window w without fold f.
        let models: Vec<Vec<Option<FittedPipeline>>> = (0..nw)
            .map(|w| {
                let x = gather(w, &all);
                let set = FoldSet {
                    x: &x,
                    p,
                    y: train_y.unwrap_or(y),
                    fold,
                    folds,
                    n_classes: k,
                };
                fit_folds_with(self.decoder.as_ref(), &set, &nesting)
            })
            .collect();
        let fitted = models.iter().flatten().flatten();
        let fits = fitted.clone().count() as u32;
        let capped = fitted.clone().filter(|m| m.hit_iteration_cap()).count() as u32;
        let single = fitted.clone().filter(|m| m.single_class()).count() as u32;
        let chosen = fitted.filter_map(FittedPipeline::chosen).collect();

        let cells = if generalize { nw * nw } else { nw };
        let mut confusion = vec![0u32; cells * k * k];
        for f in 0..folds {
            let test: Vec<usize> = all.iter().copied().filter(|&pos| fold[pos] == f).collect();
            if models.iter().all(|m| m[f].is_none()) {
                continue;
            }
            let mut tally = |w: usize, w_test: usize, rows: Vec<f64>| {
                let Some(model) = &models[w][f] else { return };
                let cell = if generalize { w * nw + w_test } else { w };
                let c = &mut confusion[cell * k * k..(cell + 1) * k * k];
                for (&pos, q) in test.iter().zip(model.predict(rows)) {
                    c[y[pos] * k + q] += 1;
                }
            };
            for w_test in 0..nw {
                let rows = gather(w_test, &test);
                if generalize {
                    for w in 0..nw {
                        tally(w, w_test, rows.clone());
                    }
                } else {
                    tally(w_test, w_test, rows);
                }
            }
        }
        let scored: Vec<(f64, f64)> = confusion
            .chunks_exact(k * k)
            .map(|c| accuracies(c, k))
            .collect();
        let diagonal = |i: usize| {
            if generalize {
                scored[i * nw + i]
            } else {
                scored[i]
            }
        };
        TimeOutcome {
            task: Task::Repeat(0),
            accuracy: (0..nw).map(|i| diagonal(i).0).collect(),
            balanced_accuracy: (0..nw).map(|i| diagonal(i).1).collect(),
            generalization: if generalize {
                scored
                    .iter()
                    .map(|&(a, b)| self.scheme.headline_of(a, b))
                    .collect()
            } else {
                Vec::new()
            },
            fits,
            capped_fits: capped,
            single_class_fits: single,
            chosen,
            ungrouped_inner: if self.recipe.tune {
                (single_group_folds(groups, fold, folds) * nw) as u32
            } else {
                0
            },
        }
    }
}

/// The window and work limits, once the windows are known (a binned table's are its bins, known only now).
fn check_limits(
    windows: usize,
    settings: &TimeSettings,
    scheme: &Scheme,
    recipe: &Recipe,
) -> Result<()> {
    let w = windows as f64;
    limits::check_windows(w, settings.generalize)?;
    let per_task = w * (2.0 + if settings.generalize { w } else { 0.0 });
    limits::check_work(
        scheme.folds() as f64 * w * recipe.shuffle_repeats().max(1) as f64,
        (recipe.repeats + recipe.shuffles) as f64 * per_task,
    )
}

/// For a decoder of counts on spike events or NWB files: the window width, which turns rates back into counts.
fn count_scale(settings: &TimeSettings, recipe: &Recipe) -> Option<f64> {
    match settings.input {
        TimeInput::Events { width, .. } | TimeInput::Nwb { width, .. }
            if recipe.classifier.needs_counts() =>
        {
            Some(width)
        }
        _ => None,
    }
}

/// One repeat's trials as [`TimePlan::one_repeat`] decodes them: their labels, folds and groups (none for
/// pseudo-trials, which never share a group), and `rows(w, positions)`, their activity at window w, row-major.
#[derive(Clone, Copy)]
struct Drawn<'a> {
    y: &'a [usize],
    fold: &'a [usize],
    folds: usize,
    groups: Option<&'a [usize]>,
    rows: &'a dyn Fn(usize, &[usize]) -> Vec<f64>,
}

fn add(total: &mut [f64], more: &[f64]) {
    for (t, m) in total.iter_mut().zip(more) {
        *t += m;
    }
}
