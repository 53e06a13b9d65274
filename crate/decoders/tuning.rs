//! Choosing a decoder's setting inside the training fold (nested cross-validation).
//!
//! Picking C by the outer test accuracy would let the test trials choose the decoder: leakage. Instead, each outer
//! training fold is split again into inner folds, every value of a log-spaced grid is scored by inner
//! cross-validation (a full pipeline per inner fold, so standardisation is refitted on inner training trials too),
//! and the value with the best inner balanced accuracy is refitted on the whole outer training fold. The outer test
//! trials are never seen: this type only ever receives the outer training rows (a test instruments that).
//!
//! The grid is C = 10⁻³ … 10³ for every decoder with a C, and for the Gaussian-kernel SVM also the kernel width: γ
//! at 0.1, 1 and 10 times its default (21 settings).
//!
//! Inner folds are drawn at random from the fit's own stream ([`FitContext::rng`], keyed by the outer task and
//! fold, so the choice is reproducible on every face): stratified inner folds, or, when the recipe has groups,
//! grouped inner folds that never split a group, exactly as the outer folds are made (a group's trials share drift
//! and identity, so an inner fold that split a group would score settings on trials resembling their training
//! trials). A training fold holding a single group cannot be split by groups; there the inner folds are
//! stratified, and the report counts such fits. Ties go to the smaller C (the simpler decoder).

use super::{fit_folds, Decoder, FitContext, FoldSet, Model, Nesting};
use crate::recipe::Setting;
use crate::resample::score::accuracies;
use crate::resample::{grouped_folds, stratified_folds};

/// Inner folds (fewer when a class has fewer training trials).
pub const INNER_FOLDS: usize = 5;

/// A decoder whose setting is chosen by inner cross-validation on each training fold.
pub struct Tuned {
    pub build: Box<dyn Fn(Setting) -> Box<dyn Decoder> + Sync>,
    pub grid: Vec<Setting>,
    pub standardise: bool,
}

struct TunedModel {
    inner: Box<dyn Model>,
    chosen: Setting,
}

/// Inner folds of a training fold: grouped when its rows carry two or more groups, stratified otherwise; returns
/// the fold of each row and the number of folds.
pub fn inner_folds(y: &[usize], n_classes: usize, context: &FitContext) -> (Vec<usize>, usize) {
    let mut rng = context.rng();
    if let Some(groups) = &context.groups {
        let n_groups = groups.iter().max().map_or(0, |g| g + 1);
        let mut present = vec![false; n_groups];
        groups.iter().for_each(|&g| present[g] = true);
        if present.iter().filter(|&&b| b).count() >= 2 {
            return grouped_folds(&mut rng, groups, n_groups, INNER_FOLDS);
        }
    }
    let mut counts = vec![0usize; n_classes];
    y.iter().for_each(|&c| counts[c] += 1);
    let smallest = counts.iter().copied().filter(|&c| c > 0).min().unwrap_or(0);
    let k = INNER_FOLDS.min(smallest).max(2);
    (stratified_folds(&mut rng, y, n_classes, k), k)
}

impl Tuned {
    /// Inner balanced accuracy of each grid value on the rows given, over the inner folds of `context`.
    pub fn scores(
        &self,
        x: &[f64],
        p: usize,
        y: &[usize],
        n_classes: usize,
        context: &FitContext,
    ) -> Vec<f64> {
        let (fold, k) = inner_folds(y, n_classes, context);
        let set = FoldSet {
            x,
            p,
            y,
            fold: &fold,
            folds: k,
            n_classes,
        };
        self.grid
            .iter()
            .map(|&value| {
                let decoder = (self.build)(value);
                let mut confusion = vec![0u32; n_classes * n_classes];
                for (f, model) in fit_folds(decoder.as_ref(), &set).into_iter().enumerate() {
                    let Some(model) = model else { continue };
                    let (_, test) = set.partition(f);
                    for (&i, q) in test.iter().zip(model.predict(set.rows(&test))) {
                        confusion[y[i] * n_classes + q] += 1;
                    }
                }
                accuracies(&confusion, n_classes).1
            })
            .collect()
    }
}

impl Decoder for Tuned {
    fn fit(&self, x: &[f64], n: usize, p: usize, y: &[usize], n_classes: usize) -> Box<dyn Model> {
        let context = FitContext::of(&Nesting::plain(0), &[], 0);
        self.fit_with(x, n, p, y, n_classes, &context)
    }

    fn fit_with(
        &self,
        x: &[f64],
        n: usize,
        p: usize,
        y: &[usize],
        n_classes: usize,
        context: &FitContext,
    ) -> Box<dyn Model> {
        let scores = self.scores(x, p, y, n_classes, context);
        // First best: the grid ascends in C (then γ), so ties keep the simpler decoder.
        let best = (0..scores.len()).fold(0, |b, i| if scores[i] > scores[b] { i } else { b });
        let chosen = self.grid[best];
        // The rows arrive standardised (or raw, for a decoder that models counts) already: fit directly.
        let inner = (self.build)(chosen).fit(x, n, p, y, n_classes);
        Box::new(TunedModel { inner, chosen })
    }

    fn standardise(&self) -> bool {
        self.standardise
    }
}

impl Model for TunedModel {
    fn predict(&self, x: &[f64]) -> Vec<usize> {
        self.inner.predict(x)
    }

    fn hit_iteration_cap(&self) -> bool {
        self.inner.hit_iteration_cap()
    }

    fn weights(&self) -> Option<Vec<(usize, Vec<f64>)>> {
        self.inner.weights()
    }

    fn decision(&self, x: &[f64]) -> Vec<f64> {
        self.inner.decision(x)
    }

    fn chosen(&self) -> Option<Setting> {
        Some(self.chosen)
    }
}
