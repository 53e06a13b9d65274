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
use crate::decoders::{self, check_counts, fit_folds, Decoder, FittedPipeline, FoldSet};
use crate::error::{Error, Result};
use crate::recipe::{Recipe, Setting, TimeInput, TimeSettings};
use crate::resample::score::accuracies;
use crate::resample::{permute_labels, Scheme, Task};
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
        scheme.warnings = warnings;
        Ok(TimePlan {
            data,
            recipe: recipe.clone(),
            settings,
            scheme,
            decoder: decoders::build(recipe.classifier, recipe.c, recipe.tune),
            count_scale,
            pool: None,
        })
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
        let count_scale = count_scale(&settings, recipe);
        let mut warnings = data.warnings.clone();
        warnings.append(&mut scheme.warnings);
        for s in &pool.sessions {
            let x = s.x.as_slice().expect("standard layout");
            let note = check_counts(recipe.classifier, x, &s.neurons, &s.source)?;
            if let Some(n) = note.filter(|_| count_scale.is_none()) {
                warnings.push(n);
            }
        }
        scheme.warnings = warnings;
        Ok(TimePlan {
            data,
            recipe: recipe.clone(),
            settings,
            scheme,
            decoder: decoders::build(recipe.classifier, recipe.c, recipe.tune),
            count_scale,
            pool: Some(pool),
        })
    }

    pub fn n_windows(&self) -> usize {
        self.data.windows.len()
    }

    /// Every task, repeats first, in index order.
    pub fn tasks(&self) -> Vec<Task> {
        Task::all(self.recipe.repeats, self.recipe.shuffles)
    }

    /// Fits one task performs (for progress): folds × windows, times the repeats of a shuffle.
    pub fn fits_in(&self, task: Task) -> usize {
        let per_repeat = self.scheme.folds() * self.n_windows();
        match task {
            Task::Repeat(_) => per_repeat,
            Task::Shuffle(_) => per_repeat * self.recipe.shuffle_repeats(),
        }
    }

    pub fn run(&self, task: Task) -> TimeOutcome {
        let seed = self.recipe.seed;
        let groups = self.data.groups.as_deref();
        match task {
            Task::Repeat(i) => {
                let mut rng = task_rng(seed, Stream::Repeat, i as u64, 0);
                let mut out = self.repeat(&self.data.y, &mut rng);
                out.task = task;
                out
            }
            Task::Shuffle(j) => {
                let mut rng = task_rng(seed, Stream::Permutation, j as u64, 0);
                let labels = permute_labels(&mut rng, &self.data.y, groups);
                let r = self.recipe.shuffle_repeats();
                let mut total: Option<TimeOutcome> = None;
                for i in 0..r {
                    let mut rng = task_rng(seed, Stream::ShuffleRepeat, j as u64, i as u64);
                    let o = self.repeat(&labels, &mut rng);
                    match &mut total {
                        None => total = Some(o),
                        Some(t) => {
                            add(&mut t.accuracy, &o.accuracy);
                            add(&mut t.balanced_accuracy, &o.balanced_accuracy);
                            add(&mut t.generalization, &o.generalization);
                            t.fits += o.fits;
                            t.capped_fits += o.capped_fits;
                            t.single_class_fits += o.single_class_fits;
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
                t.task = task;
                t
            }
        }
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
    /// decode every window.
    fn repeat(&self, labels: &[usize], rng: &mut impl RngCore) -> TimeOutcome {
        match &self.pool {
            None => {
                let draw = self.scheme.draw(labels, self.data.groups.as_deref(), rng);
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
                self.one_repeat(&draw.y, &draw.fold, draw.folds, &rows)
            }
            Some(pool) => {
                let draw = pool.draw(labels, self.scheme.folds(), self.data.classes.len(), rng);
                let rows = |w: usize, positions: &[usize]| pool.rows(&draw, w, positions);
                self.one_repeat(&draw.y, &draw.fold, draw.folds, &rows)
            }
        }
    }

    /// Cross-validate one draw at every window (and, with generalization, test every window's decoder at every
    /// window): `y` and `fold` are the draw's trials' labels and folds, `rows(w, positions)` their activity at
    /// window w, row-major. All folds of a window are fitted together, so a decoder with a fold shortcut can use it.
    fn one_repeat(
        &self,
        y: &[usize],
        fold: &[usize],
        folds: usize,
        rows: &dyn Fn(usize, &[usize]) -> Vec<f64>,
    ) -> TimeOutcome {
        let data = &self.data;
        let (nw, k, p) = (self.n_windows(), data.classes.len(), data.n_neurons());
        let generalize = self.settings.generalize;
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
                    y,
                    fold,
                    folds,
                    n_classes: k,
                };
                fit_folds(self.decoder.as_ref(), &set)
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
        }
    }
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

fn add(total: &mut [f64], more: &[f64]) {
    for (t, m) in total.iter_mut().zip(more) {
        *t += m;
    }
}
