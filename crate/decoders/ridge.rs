//! Ridge regression of one or more continuous outputs, with its penalty chosen inside the training fold.
//!
//! A continuous variable (running speed) is one output; an angle (heading) is decoded as two, its cosine and sine
//! (`analyses/continuous` reads the angle back with `atan2`). On a training fold the model
//! 1. standardises every feature with the fold's mean and SD (as [`super::FittedPipeline`] does for classifiers),
//! 2. centres each output on the fold's mean (the intercept, unpenalised),
//! 3. chooses the penalty α from [`ALPHA_GRID`] by inner cross-validation on the training rows only: the rows are
//!    dealt in turn into [`INNER_FOLDS`] inner folds (no randomness), every α is scored by the mean over inner folds
//!    of the inner test fold's mean squared error (averaged over outputs) with standardisation and centring refitted
//!    on each inner training fold, and the best α (the larger on a tie: the simpler model) is refitted on the whole
//!    training fold — the outer test rows are never seen,
//! 4. solves `(ZᵀZ + αI) w = Zᵀ(y − ȳ)`, or, with more features than rows, the same solution in its dual form
//!    `w = Zᵀ(ZZᵀ + αI)⁻¹(y − ȳ)`, by a Cholesky factor ([`super::linalg`], fixed summation order, no fused
//!    multiply-add, so native and wasm builds agree).
//!
//! The only way to a fitted model is [`FittedRidge::fit`], which receives the training rows alone: no caller can
//! leak test statistics into the standardisation, the centring or the choice of α.

use super::linalg::{axpy, cholesky_solve, cholesky_with_ridge, dot, gram};
use super::standardise::Standardiser;
pub use crate::recipe::classifier::ALPHA_GRID;

/// Inner folds for choosing α (fewer when the training fold has fewer than twice as many rows).
pub const INNER_FOLDS: usize = 5;

/// Ridge regression fitted on one training fold: its standardisation, output means, weights and chosen α.
#[derive(Debug, Clone)]
pub struct FittedRidge {
    scaler: Standardiser,
    /// Training mean of each output (the intercept on standardised features).
    pub mean: Vec<f64>,
    /// Weights per output, `p` each, on the standardised features.
    pub weights: Vec<Vec<f64>>,
    /// The penalty chosen by inner cross-validation.
    pub alpha: f64,
}

impl FittedRidge {
    /// Fit on raw row-major training rows `x` (n × p) with `y` row-major (n × m outputs), choosing α from
    /// [`ALPHA_GRID`] by inner cross-validation on these rows.
    pub fn fit(x: &[f64], n: usize, p: usize, y: &[f64], m: usize) -> FittedRidge {
        let alpha = choose_alpha(x, n, p, y, m);
        FittedRidge::fit_alpha(x, n, p, y, m, alpha)
    }

    /// Fit on raw training rows with a given α.
    pub fn fit_alpha(
        x: &[f64],
        n: usize,
        p: usize,
        y: &[f64],
        m: usize,
        alpha: f64,
    ) -> FittedRidge {
        let scaler = Standardiser::fit(x, n, p);
        let mut z = x.to_vec();
        scaler.apply(&mut z);
        let mean = output_means(y, n, m);
        let centred = centre(y, &mean, m);
        let weights = Solver::new(&z, n, p).weights(&centred, m, alpha);
        FittedRidge {
            scaler,
            mean,
            weights,
            alpha,
        }
    }

    /// Predictions (row-major, rows × m) for raw row-major rows, standardised with the training statistics.
    pub fn predict(&self, mut x: Vec<f64>) -> Vec<f64> {
        self.scaler.apply(&mut x);
        let p = self.scaler.mean.len();
        let m = self.mean.len();
        let mut out = Vec::with_capacity(x.len() / p.max(1) * m);
        for row in x.chunks_exact(p) {
            for k in 0..m {
                out.push(self.mean[k] + dot(&self.weights[k], row));
            }
        }
        out
    }
}

/// The penalty with the smallest inner cross-validated mean squared error (the larger α on a tie).
pub fn choose_alpha(x: &[f64], n: usize, p: usize, y: &[f64], m: usize) -> f64 {
    let errors = inner_errors(x, n, p, y, m);
    let mut best = 0;
    for (i, &e) in errors.iter().enumerate() {
        if e <= errors[best] {
            best = i;
        }
    }
    ALPHA_GRID[best]
}

/// The inner folds of `n` training rows: row `i` goes to fold `i mod k`, k = min(5, n / 2), at least 2.
pub fn inner_folds(n: usize) -> (Vec<usize>, usize) {
    let k = INNER_FOLDS.min(n / 2).max(2);
    ((0..n).map(|i| i % k).collect(), k)
}

/// For every α of the grid: the mean over inner folds of the inner test fold's mean squared error (averaged over
/// outputs), with standardisation, centring and fit refitted on each inner training fold.
pub fn inner_errors(x: &[f64], n: usize, p: usize, y: &[f64], m: usize) -> Vec<f64> {
    let (fold, k) = inner_folds(n);
    let mut total = vec![0.0; ALPHA_GRID.len()];
    for f in 0..k {
        let (train, test): (Vec<usize>, Vec<usize>) = (0..n).partition(|&i| fold[i] != f);
        let rows = |idx: &[usize], width: usize, from: &[f64]| -> Vec<f64> {
            let mut out = Vec::with_capacity(idx.len() * width);
            for &i in idx {
                out.extend_from_slice(&from[i * width..(i + 1) * width]);
            }
            out
        };
        let (x_train, y_train) = (rows(&train, p, x), rows(&train, m, y));
        let mut x_test = rows(&test, p, x);
        let y_test = rows(&test, m, y);
        let scaler = Standardiser::fit(&x_train, train.len(), p);
        let mut z = x_train;
        scaler.apply(&mut z);
        scaler.apply(&mut x_test);
        let mean = output_means(&y_train, train.len(), m);
        let centred = centre(&y_train, &mean, m);
        let solver = Solver::new(&z, train.len(), p);
        for (a, &alpha) in ALPHA_GRID.iter().enumerate() {
            let w = solver.weights(&centred, m, alpha);
            let mut sse = 0.0;
            for (row, truth) in x_test.chunks_exact(p).zip(y_test.chunks_exact(m)) {
                for kk in 0..m {
                    let e = truth[kk] - (mean[kk] + dot(&w[kk], row));
                    sse += e * e;
                }
            }
            total[a] += sse / (test.len() * m) as f64;
        }
    }
    total.iter().map(|t| t / k as f64).collect()
}

fn output_means(y: &[f64], n: usize, m: usize) -> Vec<f64> {
    let mut mean = vec![0.0; m];
    for row in y.chunks_exact(m) {
        for (s, v) in mean.iter_mut().zip(row) {
            *s += v;
        }
    }
    mean.iter().map(|s| s / n as f64).collect()
}

fn centre(y: &[f64], mean: &[f64], m: usize) -> Vec<f64> {
    let mut out = y.to_vec();
    for row in out.chunks_exact_mut(m) {
        for (v, mu) in row.iter_mut().zip(mean) {
            *v -= mu;
        }
    }
    out
}

/// The standardised training rows and their Gram matrix, in the primal (p × p) or dual (n × n) form, whichever
/// is smaller; shared by every α.
struct Solver<'a> {
    z: &'a [f64],
    n: usize,
    p: usize,
    /// `ZᵀZ` when `p ≤ n`, `ZZᵀ` otherwise.
    gram: Vec<f64>,
    dual: bool,
}

impl<'a> Solver<'a> {
    fn new(z: &'a [f64], n: usize, p: usize) -> Solver<'a> {
        let dual = p > n;
        let gram = if dual {
            let mut zt = vec![0.0; p * n];
            for i in 0..n {
                for j in 0..p {
                    zt[j * n + i] = z[i * p + j];
                }
            }
            gram(&zt, p, n)
        } else {
            gram(z, n, p)
        };
        Solver {
            z,
            n,
            p,
            gram,
            dual,
        }
    }

    /// Weights (p per output) for centred outputs `yc` (n × m) at penalty `alpha`.
    fn weights(&self, yc: &[f64], m: usize, alpha: f64) -> Vec<Vec<f64>> {
        let (n, p) = (self.n, self.p);
        let d = if self.dual { n } else { p };
        let mut a = self.gram.clone();
        for i in 0..d {
            a[i * d + i] += alpha;
        }
        // α > 0 makes the matrix positive definite; the ridge fallback only guards against round-off.
        let (u, _) = cholesky_with_ridge(&a, d);
        (0..m)
            .map(|k| {
                if self.dual {
                    let mut c: Vec<f64> = (0..n).map(|i| yc[i * m + k]).collect();
                    cholesky_solve(&u, n, &mut c);
                    let mut w = vec![0.0; p];
                    for (i, &ci) in c.iter().enumerate() {
                        axpy(ci, &self.z[i * p..(i + 1) * p], &mut w);
                    }
                    w
                } else {
                    let mut b = vec![0.0; p];
                    for i in 0..n {
                        axpy(yc[i * m + k], &self.z[i * p..(i + 1) * p], &mut b);
                    }
                    cholesky_solve(&u, p, &mut b);
                    b
                }
            })
            .collect()
    }
}

/// Cross-validated predictions of one split: every row predicted by the model fitted without its fold.
pub struct RegressionFolds {
    /// Row-major, rows × m.
    pub predicted: Vec<f64>,
    /// The training-fold mean of each output for each row's fold (rows × m): what out-of-sample R² is measured
    /// against.
    pub train_mean: Vec<f64>,
    /// The α chosen in each fold's fit, in fold order.
    pub alphas: Vec<f64>,
}

/// Fit on every fold but one and predict that one, for raw rows `x` (n × p), outputs `y` (n × m) and the fold of
/// each row (below `folds`). A fold without training or test rows is skipped (its rows keep NaN).
pub fn cross_validate(
    x: &[f64],
    p: usize,
    y: &[f64],
    m: usize,
    fold: &[usize],
    folds: usize,
) -> RegressionFolds {
    let n = fold.len();
    let mut out = RegressionFolds {
        predicted: vec![f64::NAN; n * m],
        train_mean: vec![f64::NAN; n * m],
        alphas: Vec::new(),
    };
    for f in 0..folds {
        let (train, test): (Vec<usize>, Vec<usize>) = (0..n).partition(|&i| fold[i] != f);
        if train.is_empty() || test.is_empty() {
            continue;
        }
        let gather = |idx: &[usize], width: usize, from: &[f64]| -> Vec<f64> {
            let mut v = Vec::with_capacity(idx.len() * width);
            for &i in idx {
                v.extend_from_slice(&from[i * width..(i + 1) * width]);
            }
            v
        };
        let model = FittedRidge::fit(
            &gather(&train, p, x),
            train.len(),
            p,
            &gather(&train, m, y),
            m,
        );
        let predicted = model.predict(gather(&test, p, x));
        for (t, &i) in test.iter().enumerate() {
            for k in 0..m {
                out.predicted[i * m + k] = predicted[t * m + k];
                out.train_mean[i * m + k] = model.mean[k];
            }
        }
        out.alphas.push(model.alpha);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn primal_and_dual_give_the_same_weights() {
        // Three rows, two features (primal), and the same data transposed in role (two rows, three features: dual)
        // checked against the normal equations solved by hand.
        // Z = [[1, 0], [0, 1], [-1, -1]], y = [1, 2, -3], α = 1: ZᵀZ + I = [[3, 1], [1, 3]], Zᵀy = [4, 5],
        // w = [[3, -1], [-1, 3]] [4, 5] / 8 = [7/8, 11/8].
        let z = [1.0, 0.0, 0.0, 1.0, -1.0, -1.0];
        let w = Solver::new(&z, 3, 2).weights(&[1.0, 2.0, -3.0], 1, 1.0);
        assert!(
            (w[0][0] - 0.875).abs() < 1e-12 && (w[0][1] - 1.375).abs() < 1e-12,
            "{w:?}"
        );
        // Dual: Z (2 × 3) = [[1, 2, 0], [0, 1, 1]], y = [1, -1], α = 0.5. Primal solution by hand:
        // (ZᵀZ + αI) w = Zᵀy with ZᵀZ = [[1, 2, 0], [2, 5, 1], [0, 1, 1]]; the dual must agree with it.
        let z2 = [1.0, 2.0, 0.0, 0.0, 1.0, 1.0];
        let dual = Solver::new(&z2, 2, 3).weights(&[1.0, -1.0], 1, 0.5);
        let zt = [1.0, 0.0, 2.0, 1.0, 0.0, 1.0]; // Zᵀ as 3 rows of 2
        let mut a = gram(&z2, 2, 3);
        for i in 0..3 {
            a[i * 3 + i] += 0.5;
        }
        let mut b: Vec<f64> = (0..3).map(|j| zt[j * 2] - zt[j * 2 + 1]).collect();
        let (u, _) = cholesky_with_ridge(&a, 3);
        cholesky_solve(&u, 3, &mut b);
        for j in 0..3 {
            assert!((dual[0][j] - b[j]).abs() < 1e-12, "{dual:?} vs {b:?}");
        }
    }

    #[test]
    fn recovers_a_noiseless_line_and_its_intercept() {
        // y = 10 + 3·x1 − 2·x2 exactly: the smallest α should win and the predictions be nearly exact.
        let n = 40;
        let x: Vec<f64> = (0..n)
            .flat_map(|i| [i as f64, ((i * 7) % 11) as f64])
            .collect();
        let y: Vec<f64> = x
            .chunks(2)
            .map(|r| 10.0 + 3.0 * r[0] - 2.0 * r[1])
            .collect();
        let model = FittedRidge::fit(&x, n, 2, &y, 1);
        assert_eq!(model.alpha, ALPHA_GRID[0]);
        let predicted = model.predict(vec![5.0, 3.0]);
        assert!(
            (predicted[0] - (10.0 + 15.0 - 6.0)).abs() < 0.05,
            "{predicted:?}"
        );
    }

    #[test]
    fn a_fold_is_predicted_by_a_model_that_never_saw_it() {
        // Leakage check: a test fold's targets can be anything at all (here replaced by huge values) without
        // changing a bit of its predictions, and the predictions equal a model fitted on the other rows alone.
        let (n, p) = (30, 3);
        let x: Vec<f64> = (0..n * p).map(|i| ((i * 37) % 23) as f64 - 11.0).collect();
        let mut y: Vec<f64> = (0..n)
            .map(|i| x[i * p] * 0.5 - x[i * p + 2] + (i % 3) as f64)
            .collect();
        let fold: Vec<usize> = (0..n).map(|i| i % 3).collect();
        let before = cross_validate(&x, p, &y, 1, &fold, 3);
        for i in (0..n).filter(|i| fold[*i] == 0) {
            y[i] = 1e6 * (i as f64 + 1.0);
        }
        let after = cross_validate(&x, p, &y, 1, &fold, 3);
        let train: Vec<usize> = (0..n).filter(|i| fold[*i] != 0).collect();
        let test: Vec<usize> = (0..n).filter(|i| fold[*i] == 0).collect();
        let rows = |idx: &[usize]| {
            idx.iter()
                .flat_map(|&i| x[i * p..(i + 1) * p].to_vec())
                .collect::<Vec<_>>()
        };
        let direct = FittedRidge::fit(
            &rows(&train),
            train.len(),
            p,
            &train.iter().map(|&i| y[i]).collect::<Vec<_>>(),
            1,
        )
        .predict(rows(&test));
        for (t, &i) in test.iter().enumerate() {
            assert_eq!(before.predicted[i].to_bits(), after.predicted[i].to_bits());
            assert_eq!(after.predicted[i].to_bits(), direct[t].to_bits());
        }
        assert_ne!(
            before.predicted[1], after.predicted[1],
            "fold 1 did train on fold 0's changed targets"
        );
    }

    #[test]
    fn inner_errors_equal_separate_fits_on_each_inner_fold() {
        // The shared Gram matrix per inner fold must give what a separate fit per (inner fold, α) gives.
        let n = 23;
        let mut state = 12345u64;
        let mut next = || {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (state >> 11) as f64 / (1u64 << 53) as f64 - 0.5
        };
        let (p, m) = (4, 2);
        let x: Vec<f64> = (0..n * p).map(|_| next()).collect();
        let y: Vec<f64> = (0..n * m).map(|_| next()).collect();
        let errors = inner_errors(&x, n, p, &y, m);
        let (fold, k) = inner_folds(n);
        assert_eq!(k, INNER_FOLDS);
        for (a, &alpha) in ALPHA_GRID.iter().enumerate() {
            let mut total = 0.0;
            for f in 0..k {
                let (train, test): (Vec<usize>, Vec<usize>) = (0..n).partition(|&i| fold[i] != f);
                let pick = |idx: &[usize], w: usize, v: &[f64]| -> Vec<f64> {
                    idx.iter()
                        .flat_map(|&i| v[i * w..(i + 1) * w].to_vec())
                        .collect()
                };
                let model = FittedRidge::fit_alpha(
                    &pick(&train, p, &x),
                    train.len(),
                    p,
                    &pick(&train, m, &y),
                    m,
                    alpha,
                );
                let predicted = model.predict(pick(&test, p, &x));
                let truth = pick(&test, m, &y);
                let sse: f64 = truth
                    .iter()
                    .zip(&predicted)
                    .map(|(t, q)| (t - q) * (t - q))
                    .sum();
                total += sse / (test.len() * m) as f64;
            }
            let direct = total / k as f64;
            assert!(
                (errors[a] - direct).abs() <= 1e-12 * direct,
                "α = {alpha}: {} vs {direct}",
                errors[a]
            );
        }
    }
}
