//! Decoders: one trait, a registry, and the fitted pipeline that keeps standardisation inside the training fold.
//!
//! Adding a decoder: write a module with a type implementing [`Decoder`] (fit on standardised training rows, return
//! a [`Model`] that predicts class indices), then add one variant to [`Classifier`] and one arm to
//! [`Classifier::build`]. The protocol, the reports and every face pick it up from there.

pub mod linalg;
pub mod linear_svm;
pub mod shrinkage_lda;
pub mod standardise;

use serde::{Deserialize, Serialize};
use standardise::Standardiser;

/// Something that learns from a training fold.
///
/// Inputs are row-major (`n` rows × `p` features), already standardised with training-fold statistics; `y` holds
/// class indices below `n_classes`, and at least two distinct classes are present (the pipeline handles the
/// degenerate one-class fold itself). Classes absent from the fold must never be predicted.
pub trait Decoder: Sync {
    fn fit(&self, x: &[f64], n: usize, p: usize, y: &[usize], n_classes: usize) -> Box<dyn Model>;
}

/// A fitted decoder.
pub trait Model: Send {
    /// Class index for each row of row-major `x` (standardised like the training data).
    fn predict(&self, x: &[f64]) -> Vec<usize>;
    /// True when an iterative solver stopped at its iteration cap instead of its tolerance.
    fn hit_iteration_cap(&self) -> bool {
        false
    }
}

/// The decoders a recipe can name.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Classifier {
    LinearSvm,
    ShrinkageLda,
}

impl Classifier {
    pub const ALL: [Classifier; 2] = [Classifier::LinearSvm, Classifier::ShrinkageLda];

    /// The spelling used in recipes and on the command line.
    pub fn name(self) -> &'static str {
        match self {
            Classifier::LinearSvm => "linear-svm",
            Classifier::ShrinkageLda => "shrinkage-lda",
        }
    }

    pub fn from_name(name: &str) -> Option<Classifier> {
        Classifier::ALL.into_iter().find(|c| c.name() == name)
    }

    /// Whether the regularisation constant C means anything for this decoder.
    pub fn uses_c(self) -> bool {
        matches!(self, Classifier::LinearSvm)
    }

    /// One sentence for the methods paragraph.
    pub fn describe(self, c: f64) -> String {
        match self {
            Classifier::LinearSvm => format!(
                "a linear support vector machine (L2-regularised squared hinge loss with the intercept as a \
                 constant feature, C = {c}, one-vs-rest for more than two classes), minimised in the primal by the \
                 finite Newton method (Keerthi & DeCoste, 2005) when a training fold had more trials than features \
                 and otherwise in the dual by coordinate descent (Hsieh et al., 2008; stopping tolerance {} on the \
                 projected gradient, at most {} passes)",
                linear_svm::TOLERANCE,
                linear_svm::MAX_PASSES
            ),
            Classifier::ShrinkageLda => "linear discriminant analysis with a pooled within-class covariance \
                 regularised by Ledoit–Wolf analytic shrinkage (Ledoit & Wolf, 2004) and class priors equal to the \
                 training-fold class proportions"
                .to_string(),
        }
    }

    pub fn build(self, c: f64) -> Box<dyn Decoder> {
        match self {
            Classifier::LinearSvm => Box::new(linear_svm::LinearSvm { c }),
            Classifier::ShrinkageLda => Box::new(shrinkage_lda::ShrinkageLda),
        }
    }
}

/// Standardisation plus decoder, both fitted on one training fold.
pub struct FittedPipeline {
    scaler: Standardiser,
    fitted: Fitted,
}

enum Fitted {
    Model(Box<dyn Model>),
    /// The training fold held a single class (possible with grouped folds): every prediction is that class.
    OnlyClass(usize),
}

impl FittedPipeline {
    /// Fit on raw (unstandardised) row-major training rows. The only way to get a fitted decoder.
    pub fn fit(
        decoder: &dyn Decoder,
        x_train: &[f64],
        p: usize,
        y_train: &[usize],
        n_classes: usize,
    ) -> Self {
        let n = y_train.len();
        let scaler = Standardiser::fit(x_train, n, p);
        let first = y_train[0];
        let fitted = if y_train.iter().all(|&c| c == first) {
            Fitted::OnlyClass(first)
        } else {
            let mut z = x_train.to_vec();
            scaler.apply(&mut z);
            Fitted::Model(decoder.fit(&z, n, p, y_train, n_classes))
        };
        FittedPipeline { scaler, fitted }
    }

    /// Predict raw row-major test rows (taken by value), standardised with the training statistics.
    pub fn predict(&self, mut x_test: Vec<f64>) -> Vec<usize> {
        match &self.fitted {
            Fitted::OnlyClass(c) => vec![*c; x_test.len() / self.scaler.mean.len()],
            Fitted::Model(m) => {
                self.scaler.apply(&mut x_test);
                m.predict(&x_test)
            }
        }
    }

    pub fn hit_iteration_cap(&self) -> bool {
        matches!(&self.fitted, Fitted::Model(m) if m.hit_iteration_cap())
    }

    pub fn single_class(&self) -> bool {
        matches!(self.fitted, Fitted::OnlyClass(_))
    }
}

/// The classes present in `y`, ascending.
pub(crate) fn present_classes(y: &[usize], n_classes: usize) -> Vec<usize> {
    let mut seen = vec![false; n_classes];
    for &c in y {
        seen[c] = true;
    }
    (0..n_classes).filter(|&c| seen[c]).collect()
}

/// Index of the largest score, first one on ties (as `argmax` conventionally does).
pub(crate) fn argmax(scores: &[f64]) -> usize {
    let mut best = 0;
    for (i, &s) in scores.iter().enumerate() {
        if s > scores[best] {
            best = i;
        }
    }
    best
}
