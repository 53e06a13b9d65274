//! Decoders: one trait, a registry, and the fitted pipeline that keeps standardisation inside the training fold.
//!
//! Adding a decoder: write a module with a type implementing [`Decoder`] (fit on standardised training rows, return
//! a [`Model`] that predicts class indices), then add one variant to the recipe's [`Classifier`] and one arm to
//! [`build`] and [`describe`] here. The protocol, the reports and every face pick it up from there.

pub mod gaussian_nb;
pub mod linalg;
pub mod linear_svm;
pub mod logistic;
pub mod nearest_mean;
pub mod poisson_nb;
pub mod rbf_svm;
pub mod ridge;
pub mod shrinkage_lda;
pub mod simd;
pub mod standardise;
pub mod tuning;

use crate::recipe::{Classifier, Setting};
use crate::rng::{task_rng, Stream};
use standardise::Standardiser;
use std::borrow::Cow;

/// Something that learns from a training fold.
///
/// Inputs are row-major (`n` rows × `p` features), already standardised with training-fold statistics; `y` holds
/// class indices below `n_classes`, and at least two distinct classes are present (the pipeline handles the
/// degenerate one-class fold itself). Classes absent from the fold must never be predicted.
pub trait Decoder: Sync {
    fn fit(&self, x: &[f64], n: usize, p: usize, y: &[usize], n_classes: usize) -> Box<dyn Model>;

    /// Fit knowing more about the training rows than their values: their groups and a random stream of their own
    /// ([`FitContext`]). Only a decoder that resamples its training rows (nested tuning) needs this; the others
    /// fit as [`Decoder::fit`] does.
    fn fit_with(
        &self,
        x: &[f64],
        n: usize,
        p: usize,
        y: &[usize],
        n_classes: usize,
        _context: &FitContext,
    ) -> Box<dyn Model> {
        self.fit(x, n, p, y, n_classes)
    }

    /// Whether the pipeline standardises features before this decoder (every decoder but one that models raw
    /// counts).
    fn standardise(&self) -> bool {
        true
    }

    /// A shortcut for fitting every fold of a split at once, for decoders whose training statistics are sums over
    /// trials (each trial's share is then computed once, and a fold is left out by subtraction). Rows are raw, not
    /// standardised, and the pipeline will not standardise what the models predict: a decoder may only offer this
    /// when it is exactly invariant to per-feature shifts and scales (shrinkage LDA), or when its models carry the
    /// training fold's standardisation, computed from the same sums (nearest mean), so that the result differs from
    /// the pipeline's only by rounding. Returns a model for every fold
    /// with `wanted[f]`, each fitted on the rows outside fold f only; `None` (the default) means no shortcut.
    fn fit_folds_raw(
        &self,
        _set: &FoldSet,
        _wanted: &[bool],
    ) -> Option<Vec<Option<Box<dyn Model>>>> {
        None
    }
}

/// The trials of one split: raw row-major rows (n × p), their class indices, and the fold of each (below `folds`).
pub struct FoldSet<'a> {
    pub x: &'a [f64],
    pub p: usize,
    pub y: &'a [usize],
    pub fold: &'a [usize],
    pub folds: usize,
    pub n_classes: usize,
}

impl FoldSet<'_> {
    /// Row-major rows at `positions`.
    pub fn rows(&self, positions: &[usize]) -> Vec<f64> {
        let p = self.p;
        let mut out = Vec::with_capacity(positions.len() * p);
        for &i in positions {
            out.extend_from_slice(&self.x[i * p..(i + 1) * p]);
        }
        out
    }

    /// Training and test positions of fold `f`.
    pub fn partition(&self, f: usize) -> (Vec<usize>, Vec<usize>) {
        (0..self.y.len()).partition(|&i| self.fold[i] != f)
    }
}

/// What nested tuning needs to know about a split's rows beyond their values: the group of each row (inner folds
/// never split a group), and the random stream its inner folds are shuffled by, keyed by (`seed`, `key`) and
/// then by the outer fold, so that the inner folds depend only on the task that drew the split.
#[derive(Debug, Clone, Copy)]
pub struct Nesting<'a> {
    /// Group of each row of the set, when the recipe has groups.
    pub groups: Option<&'a [usize]>,
    pub seed: u64,
    pub key: u64,
}

impl Nesting<'_> {
    /// No groups, and the stream (`seed`, key 0): for fits outside a resampled task (fold numbers given by the
    /// user, a decoder fitted on every trial).
    pub fn plain(seed: u64) -> Nesting<'static> {
        Nesting {
            groups: None,
            seed,
            key: 0,
        }
    }
}

/// What one fit may know beyond its training rows' values and labels ([`Decoder::fit_with`]).
#[derive(Debug, Clone)]
pub struct FitContext {
    /// Group of each training row, when the recipe has groups.
    pub groups: Option<Vec<usize>>,
    /// The fit's own random stream: `task_rng(seed, Stream::InnerFolds, key, fold)`.
    pub seed: u64,
    pub key: u64,
    pub fold: u64,
}

impl FitContext {
    /// The context of training `rows` of a set (outer fold `fold`).
    pub fn of(nesting: &Nesting, rows: &[usize], fold: usize) -> FitContext {
        FitContext {
            groups: nesting.groups.map(|g| rows.iter().map(|&i| g[i]).collect()),
            seed: nesting.seed,
            key: nesting.key,
            fold: fold as u64,
        }
    }

    /// The random stream of this fit.
    pub fn rng(&self) -> rand_chacha::ChaCha20Rng {
        task_rng(self.seed, Stream::InnerFolds, self.key, self.fold)
    }
}

/// One pipeline per fold, each fitted on the trials outside its fold only; `None` for a fold with no training or
/// no test trials. Uses the decoder's shortcut when it has one, and a pipeline per fold otherwise.
pub fn fit_folds(decoder: &dyn Decoder, set: &FoldSet) -> Vec<Option<FittedPipeline>> {
    fit_folds_with(decoder, set, &Nesting::plain(0))
}

/// [`fit_folds`], with what nested tuning needs to know about the rows ([`Nesting`]).
pub fn fit_folds_with(
    decoder: &dyn Decoder,
    set: &FoldSet,
    nesting: &Nesting,
) -> Vec<Option<FittedPipeline>> {
    let splits: Vec<(Vec<usize>, Vec<usize>)> = (0..set.folds).map(|f| set.partition(f)).collect();
    let single: Vec<Option<usize>> = splits
        .iter()
        .map(|(train, _)| {
            let first = set.y[*train.first()?];
            train.iter().all(|&i| set.y[i] == first).then_some(first)
        })
        .collect();
    let usable = |f: usize| !splits[f].0.is_empty() && !splits[f].1.is_empty();
    let wanted: Vec<bool> = (0..set.folds)
        .map(|f| usable(f) && single[f].is_none())
        .collect();
    let mut shortcut = decoder.fit_folds_raw(set, &wanted);
    (0..set.folds)
        .map(|f| {
            // A worker let go (crate::stop) fits no more folds: its outcome is thrown away.
            if !usable(f) || crate::stop::requested() {
                return None;
            }
            if let Some(c) = single[f] {
                return Some(FittedPipeline::only_class(c, set.p));
            }
            if let Some(models) = shortcut.as_mut() {
                let model = models[f].take().expect("a model for every wanted fold");
                return Some(FittedPipeline {
                    scaler: None,
                    p: set.p,
                    fitted: Fitted::Model(model),
                });
            }
            let (train, _) = &splits[f];
            let y_train: Vec<usize> = train.iter().map(|&i| set.y[i]).collect();
            Some(FittedPipeline::fit_rows(
                decoder,
                Cow::Owned(set.rows(train)),
                set.p,
                &y_train,
                set.n_classes,
                &FitContext::of(nesting, train, f),
            ))
        })
        .collect()
}

/// Test predictions of one split, every fold predicted by the pipeline fitted without it.
pub struct CrossValidated {
    /// Predicted class of each row of the set (`usize::MAX` for a row whose fold had no model).
    pub labels: Vec<usize>,
    pub fits: u32,
    /// Fits whose solver stopped at its iteration cap.
    pub capped: u32,
    /// Fits whose training fold held a single class.
    pub single_class: u32,
    /// With tuning, the setting chosen in each fit, in fold order.
    pub chosen: Vec<Setting>,
    /// When asked for a two-class set: each row's decision value (larger favours the second class; see
    /// [`Model::decision`]), NaN for a row whose fold had no model; empty otherwise.
    pub decision: Vec<f64>,
}

/// Fit on every fold but one, predict that one: a prediction for every row of the set, and with `decisions` (two
/// classes only) each row's decision value.
pub fn cross_validate(
    decoder: &dyn Decoder,
    set: &FoldSet,
    nesting: &Nesting,
    decisions: bool,
) -> CrossValidated {
    let decisions = decisions && set.n_classes == 2;
    let mut out = CrossValidated {
        labels: vec![usize::MAX; set.y.len()],
        fits: 0,
        capped: 0,
        single_class: 0,
        chosen: Vec::new(),
        decision: if decisions {
            vec![f64::NAN; set.y.len()]
        } else {
            Vec::new()
        },
    };
    for (f, model) in fit_folds_with(decoder, set, nesting)
        .into_iter()
        .enumerate()
    {
        let Some(model) = model else { continue };
        let (_, test) = set.partition(f);
        for positions in test.chunks(test_block(set.p)) {
            let rows = set.rows(positions);
            if decisions {
                for (&pos, d) in positions.iter().zip(model.decision(rows.clone())) {
                    out.decision[pos] = d;
                }
            }
            for (&pos, c) in positions.iter().zip(model.predict(rows)) {
                out.labels[pos] = c;
            }
        }
        out.fits += 1;
        out.capped += u32::from(model.hit_iteration_cap());
        out.single_class += u32::from(model.single_class());
        out.chosen.extend(model.chosen());
    }
    out
}

/// How many test rows are copied (to be standardised) and predicted at a time: about a megabyte of them, and at
/// least 64. A worker so never holds a copy of a whole test fold beside the data (on the page, whose workers share
/// one copy of a large matrix, that copy would be most of a worker's memory). Every decoder predicts a row from
/// that row alone, with sums in a fixed order, so blocks give the numbers the whole fold gives (checked by
/// `predicting_in_blocks_changes_nothing`).
fn test_block(p: usize) -> usize {
    ((1 << 20) / (8 * p.max(1))).max(64)
}

/// Whether a decoder is linear with weights per neuron (weights and activation patterns in the neuron analyses).
pub fn has_weights(classifier: Classifier) -> bool {
    matches!(
        classifier,
        Classifier::LinearSvm | Classifier::ShrinkageLda | Classifier::Logistic
    )
}

/// What a report must say when a decoder cannot work as described on `features` features (nearest-mean's
/// correlation below three features).
pub fn features_note(classifier: Classifier, features: usize) -> Option<String> {
    (classifier == Classifier::NearestMean)
        .then(|| nearest_mean::fewer_features_note(features))
        .flatten()
}

/// Kernel matrices above this size (256 MB per worker) are worth a warning on the page.
const RBF_KERNEL_WARNING_BYTES: usize = 256 << 20;

/// A warning when a decoder will need more memory per fit than a browser tab comfortably gives, for training
/// folds of up to `trials` trials.
pub fn memory_warning(classifier: Classifier, trials: usize) -> Option<String> {
    let bytes = rbf_svm::kernel_bytes(trials);
    (classifier == Classifier::RbfSvm && bytes > RBF_KERNEL_WARNING_BYTES).then(|| {
        format!(
            "the RBF SVM keeps a kernel matrix of up to {} MB per training fold; in a browser tab with several \
             workers this can run out of memory (the command line has no such limit)",
            bytes >> 20
        )
    })
}

/// A fitted decoder.
pub trait Model: Send {
    /// Class index for each row of row-major `x` (standardised like the training data).
    fn predict(&self, x: &[f64]) -> Vec<usize>;
    /// True when an iterative solver stopped at its iteration cap instead of its tolerance.
    fn hit_iteration_cap(&self) -> bool {
        false
    }
    /// For linear decoders: the weight vector (p values, no intercept) of each output, and what each output scores
    /// (the class index, or for a single binary output the class it favours when positive). `None` otherwise.
    fn weights(&self) -> Option<Vec<(usize, Vec<f64>)>> {
        None
    }
    /// The setting chosen by nested cross-validation, for a tuned decoder.
    fn chosen(&self) -> Option<Setting> {
        None
    }
    /// For a model of two classes (both in its training fold): one decision value per row, larger for the second
    /// class (index 1) and positive where the model predicts it (up to ties at exactly 0); the score the ROC curve
    /// is drawn from.
    fn decision(&self, x: &[f64]) -> Vec<f64>;
}

/// The decoder a recipe names, with its setting chosen inside each training fold when `tune` is set.
///
/// Decoders of classes only: the regressors (`ridge`, `circular-ridge`) are fitted by [`ridge`], and every analysis
/// of classes refuses them with a message before it builds a decoder (`analyses::resolve_scheme`,
/// `predict_with_folds`).
pub fn build(classifier: Classifier, c: f64, tune: bool) -> Box<dyn Decoder> {
    match (tune, classifier.grid()) {
        (true, Some(grid)) => Box::new(tuning::Tuned {
            build: Box::new(move |s: Setting| build_setting(classifier, s)),
            grid,
            standardise: !classifier.needs_counts(),
        }),
        _ => build_plain(classifier, c),
    }
}

/// The decoder at one grid point.
pub fn build_setting(classifier: Classifier, s: Setting) -> Box<dyn Decoder> {
    match classifier {
        Classifier::RbfSvm => Box::new(rbf_svm::RbfSvm {
            c: s.c,
            gamma_factor: s.gamma_factor.unwrap_or(1.0),
        }),
        other => build_plain(other, s.c),
    }
}

fn build_plain(classifier: Classifier, c: f64) -> Box<dyn Decoder> {
    match classifier {
        Classifier::LinearSvm => Box::new(linear_svm::LinearSvm { c }),
        Classifier::ShrinkageLda => Box::new(shrinkage_lda::ShrinkageLda),
        Classifier::NearestMean => Box::new(nearest_mean::NearestMean),
        Classifier::GaussianNb => Box::new(gaussian_nb::GaussianNb),
        Classifier::PoissonNb => Box::new(poisson_nb::PoissonNb),
        Classifier::Logistic => Box::new(logistic::Logistic { c }),
        Classifier::RbfSvm => Box::new(rbf_svm::RbfSvm {
            c,
            gamma_factor: 1.0,
        }),
        Classifier::Ridge | Classifier::CircularRidge => unreachable!(
            "{} predicts numbers; analyses of classes refuse it before building a decoder",
            classifier.name()
        ),
    }
}

/// A message refusing a regressor where classes are decoded, or `Ok` for a decoder of classes.
pub fn require_classes(classifier: Classifier) -> crate::Result<()> {
    if classifier.is_regression() {
        return Err(crate::Error::Recipe(format!(
            "{} decodes a continuous variable; this analysis decodes classes, so choose a decoder of classes ({})",
            classifier.name(),
            Classifier::ALL.map(Classifier::name).join(", ")
        )));
    }
    Ok(())
}

/// One sentence for the methods paragraph: the decoder, its setting and its citation, as it was fitted on
/// `features` features. `c` is `None` when C was chosen by nested cross-validation.
pub fn describe(classifier: Classifier, c: Option<f64>, features: usize) -> String {
    let c = c.map_or("C chosen within each training fold".to_string(), |c| {
        format!("C = {c}")
    });
    match classifier {
        Classifier::LinearSvm => format!(
            "a linear support vector machine (L2-regularised squared hinge loss with the intercept as a \
             constant feature, {c}, one-vs-rest for more than two classes), minimised in the primal by the \
             finite Newton method (Keerthi & DeCoste, 2005) when a training fold had more than three trials per \
             feature (up to four and a half, with 150 features or more, starting where {} passes of the dual \
             stopped, {} with 600 features or more and up to three and a half trials per feature) and otherwise \
             in the dual by coordinate descent (Hsieh et al., 2008; stopping tolerance {} on the projected \
             gradient; a fit still moving after {} passes was finished by the same Newton method from where the \
             dual stopped)",
            linear_svm::SHORT_DUAL_PASSES,
            linear_svm::WIDE_DUAL_PASSES,
            linear_svm::TOLERANCE,
            linear_svm::HANDOVER_PASSES
        ),
        Classifier::ShrinkageLda => "linear discriminant analysis with a pooled within-class covariance \
             regularised by Ledoit–Wolf analytic shrinkage (Ledoit & Wolf, 2004) and class priors equal to the \
             training-fold class proportions"
            .to_string(),
        Classifier::NearestMean if features < nearest_mean::MIN_CORRELATION_FEATURES => format!(
            "a nearest-class-mean decoder assigning each test trial to the class whose mean training pattern was \
             nearest in Euclidean distance (with {features} feature{} a correlation across features, the rule used \
             from {} features on, is {})",
            if features == 1 { "" } else { "s" },
            nearest_mean::MIN_CORRELATION_FEATURES,
            if features == 1 { "undefined" } else { "always +1 or −1" }
        ),
        Classifier::NearestMean => "a nearest-class-mean decoder assigning each test trial to the class whose \
             mean training pattern correlated best with it across features (Pearson correlation; a correlation \
             ignores any shift or gain shared by all features, so a change of the whole population's activity \
             together does not inform it)"
            .to_string(),
        Classifier::GaussianNb => format!(
            "Gaussian naive Bayes (independent normal features per class, maximum-likelihood class variances \
             increased by {} times the largest feature variance, priors equal to the training-fold class \
             proportions, as scikit-learn's GaussianNB)",
            gaussian_nb::VAR_SMOOTHING
        ),
        Classifier::PoissonNb => "Poisson naive Bayes (independent Poisson counts per neuron and class, rates \
             (sum + 0.5)/n, priors equal to the training-fold class proportions)"
            .to_string(),
        Classifier::Logistic => format!(
            "logistic regression with an L2 penalty ({c}; binary for two classes, multinomial otherwise; \
             unpenalised intercepts), minimised by limited-memory BFGS to a relative gradient norm of {} (at \
             most {} iterations)",
            logistic::TOLERANCE,
            logistic::MAX_ITERATIONS
        ),
        Classifier::RbfSvm => format!(
            "a support vector machine with a Gaussian kernel ({c}; kernel width γ = 1/(features × variance of \
             the standardised training values)), one machine per pair of classes with voting, solved by SMO \
             with second-order working-set selection (Fan, Chen & Lin, 2005; tolerance {})",
            rbf_svm::TOLERANCE
        ),
        Classifier::Ridge => format!(
            "ridge regression (least squares with an L2 penalty α on the weights of the standardised features; the \
             target centred on the training-fold mean, which is the unpenalised intercept), {}",
            ridge_alpha_choice()
        ),
        Classifier::CircularRidge => format!(
            "ridge regression of the angle's cosine and sine (two outputs sharing one penalty α, each centred on its \
             training-fold mean), the predicted angle being atan2(predicted sine, predicted cosine), {}",
            ridge_alpha_choice()
        ),
    }
}

/// How ridge's penalty is chosen, as the methods paragraph says it.
fn ridge_alpha_choice() -> String {
    let grid: Vec<String> = ridge::ALPHA_GRID.iter().map(|a| a.to_string()).collect();
    format!(
        "with α chosen within each training fold by nested cross-validation: the training trials were dealt in \
         turn into {} inner folds, every α in {{{}}} was scored by the mean over inner folds of the mean squared \
         error of the full pipeline (standardisation and centring refitted on each inner training fold), and the best \
         (the larger on ties) was refitted on the whole training fold; the test fold was never used to choose it",
        ridge::INNER_FOLDS,
        grid.join(", ")
    )
}

/// Standardisation plus decoder, both fitted on one training fold. `scaler` is `None` for decoders fitted by their
/// fold shortcut on raw rows (see [`Decoder::fit_folds_raw`]), which are invariant to standardisation.
pub struct FittedPipeline {
    scaler: Option<Standardiser>,
    p: usize,
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
        let context = FitContext::of(&Nesting::plain(0), &[], 0);
        FittedPipeline::fit_with(decoder, x_train, p, y_train, n_classes, &context)
    }

    /// [`FittedPipeline::fit`] with what a tuned decoder may know about the rows ([`FitContext`]).
    pub fn fit_with(
        decoder: &dyn Decoder,
        x_train: &[f64],
        p: usize,
        y_train: &[usize],
        n_classes: usize,
        context: &FitContext,
    ) -> Self {
        FittedPipeline::fit_rows(
            decoder,
            Cow::Borrowed(x_train),
            p,
            y_train,
            n_classes,
            context,
        )
    }

    /// [`FittedPipeline::fit_with`] on rows that may be the caller's own copy, which is then standardised in place:
    /// a training fold is copied once, not twice.
    fn fit_rows(
        decoder: &dyn Decoder,
        x_train: Cow<'_, [f64]>,
        p: usize,
        y_train: &[usize],
        n_classes: usize,
        context: &FitContext,
    ) -> Self {
        let n = y_train.len();
        let first = y_train[0];
        if y_train.iter().all(|&c| c == first) {
            return FittedPipeline::only_class(first, p);
        }
        if !decoder.standardise() {
            return FittedPipeline {
                scaler: None,
                p,
                fitted: Fitted::Model(
                    decoder.fit_with(&x_train, n, p, y_train, n_classes, context),
                ),
            };
        }
        let scaler = Standardiser::fit(&x_train, n, p);
        let mut z = x_train.into_owned();
        scaler.apply(&mut z);
        let fitted = Fitted::Model(decoder.fit_with(&z, n, p, y_train, n_classes, context));
        FittedPipeline {
            scaler: Some(scaler),
            p,
            fitted,
        }
    }

    fn only_class(class: usize, p: usize) -> Self {
        FittedPipeline {
            scaler: None,
            p,
            fitted: Fitted::OnlyClass(class),
        }
    }

    /// Predict raw row-major test rows (taken by value), standardised with the training statistics.
    pub fn predict(&self, mut x_test: Vec<f64>) -> Vec<usize> {
        match &self.fitted {
            Fitted::OnlyClass(c) => vec![*c; x_test.len() / self.p],
            Fitted::Model(m) => {
                if let Some(s) = &self.scaler {
                    s.apply(&mut x_test);
                }
                m.predict(&x_test)
            }
        }
    }

    /// Decision values of raw test rows for a two-class problem ([`Model::decision`]); a training fold that held a
    /// single class gives every test trial 0 (no ranking among them).
    pub fn decision(&self, mut x_test: Vec<f64>) -> Vec<f64> {
        match &self.fitted {
            Fitted::OnlyClass(_) => vec![0.0; x_test.len() / self.p],
            Fitted::Model(m) => {
                if let Some(s) = &self.scaler {
                    s.apply(&mut x_test);
                }
                m.decision(&x_test)
            }
        }
    }

    pub fn hit_iteration_cap(&self) -> bool {
        matches!(&self.fitted, Fitted::Model(m) if m.hit_iteration_cap())
    }

    /// The setting chosen inside the training fold, when the decoder was tuned.
    pub fn chosen(&self) -> Option<Setting> {
        match &self.fitted {
            Fitted::Model(m) => m.chosen(),
            Fitted::OnlyClass(_) => None,
        }
    }

    /// The linear decoder's weights, on the standardised features it was fitted on (see [`Model::weights`]).
    pub fn weights(&self) -> Option<Vec<(usize, Vec<f64>)>> {
        match &self.fitted {
            Fitted::Model(m) => m.weights(),
            Fitted::OnlyClass(_) => None,
        }
    }

    pub fn single_class(&self) -> bool {
        matches!(self.fitted, Fitted::OnlyClass(_))
    }
}

/// For decoders that model counts: every value must be a non-negative number (an error otherwise), and values that
/// are not whole numbers (rates, most likely) earn a warning, returned. `names` label the columns.
pub fn check_counts(
    classifier: Classifier,
    values: &[f64],
    names: &[String],
    source: &str,
) -> crate::Result<Option<String>> {
    if !classifier.needs_counts() {
        return Ok(None);
    }
    let p = names.len();
    if let Some(at) = values.iter().position(|v| *v < 0.0) {
        return Err(crate::Error::Design(format!(
            "{source}: {} models spike counts, but '{}' has the negative value {}; choose another decoder",
            classifier.name(),
            names[at % p],
            values[at]
        )));
    }
    Ok(values
        .iter()
        .position(|v| v.fract() != 0.0)
        .map(|at| {
            format!(
                "{} models spike counts, but '{}' holds {} and other values that are not whole numbers (rates?): \
                 they are used as given; with balanced classes the decisions are those on counts, but with \
                 unbalanced ones the class proportions weigh differently; counts per window are the right input",
                classifier.name(),
                names[at % p],
                values[at]
            )
        }))
}

/// A linear decoder's scores: one weight row per class (one-vs-rest, or softmax), or a single row for two classes
/// whose positive side is the second class. Shared by the linear SVM and logistic regression.
pub(crate) struct LinearModel {
    pub classes: Vec<usize>,
    /// Row per output: `p` weights then the intercept.
    pub w: Vec<Vec<f64>>,
    pub capped: bool,
}

impl Model for LinearModel {
    fn predict(&self, x: &[f64]) -> Vec<usize> {
        let p = self.w[0].len() - 1;
        x.chunks_exact(p)
            .map(|row| {
                let decision = |w: &Vec<f64>| linalg::dot(&w[..p], row) + w[p];
                if self.w.len() == 1 {
                    self.classes[usize::from(decision(&self.w[0]) > 0.0)]
                } else {
                    let scores: Vec<f64> = self.w.iter().map(decision).collect();
                    self.classes[argmax(&scores)]
                }
            })
            .collect()
    }

    fn hit_iteration_cap(&self) -> bool {
        self.capped
    }

    fn decision(&self, x: &[f64]) -> Vec<f64> {
        let p = self.w[0].len() - 1;
        let score = |w: &Vec<f64>, row: &[f64]| linalg::dot(&w[..p], row) + w[p];
        x.chunks_exact(p)
            .map(|row| match &self.w[..] {
                [w] => score(w, row),
                rows => two_class_margin(&rows.iter().map(|w| score(w, row)).collect::<Vec<_>>()),
            })
            .collect()
    }

    fn weights(&self) -> Option<Vec<(usize, Vec<f64>)>> {
        let p = self.w[0].len() - 1;
        Some(if self.w.len() == 1 {
            vec![(self.classes[1], self.w[0][..p].to_vec())]
        } else {
            self.classes
                .iter()
                .zip(&self.w)
                .map(|(&c, w)| (c, w[..p].to_vec()))
                .collect()
        })
    }
}

/// The decision value of a two-class model that scores each class: the second class's score less the first's
/// (positive exactly where [`argmax`] picks the second).
pub(crate) fn two_class_margin(scores: &[f64]) -> f64 {
    debug_assert_eq!(scores.len(), 2, "a decision value needs two classes");
    scores[1] - scores[0]
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
