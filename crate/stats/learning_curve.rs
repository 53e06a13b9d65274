//! An inverse power-law learning curve, `score(n) = a − b·n^(−c)`, fitted to scores measured at several sample
//! sizes by weighted nonlinear least squares, with a pointwise confidence interval for the fitted curve (Figueroa
//! et al., 2012, fit this model by weighted least squares to predict classification performance at larger sizes).
//!
//! How it is fitted, and why: for a fixed exponent c the model is linear in (a, b), so (a, b) have a closed form
//! and only c is searched (a profile of the residual sum of squares over a log-spaced grid of c from 0.01 to 10,
//! refined by golden-section search between the best grid point's neighbours). That needs no starting values and
//! always returns the same numbers. An exponent at either end of the grid means the points do not bend like a
//! learning curve (flat, or straight), and the fit is refused rather than extrapolated.
//!
//! The asymptote a is a score and cannot exceed 1 (in Figueroa et al.'s form, 1 − a is the minimum achievable
//! error, which cannot be negative). Points that still rise steadily on a log scale pull an unbounded fit to an
//! asymptote far above 1 with an exponent near 0 (a straight line in log n, with no ceiling); bounded, the fit
//! holds a at 1 and lets the error fall as a power of n, `1 − score = b·n^(−c)`.
//!
//! The interval is the usual one for nonlinear least squares (the delta method): the parameters' covariance
//! s²·(JᵀWJ)⁻¹, with s² the weighted residual variance on k − 3 degrees of freedom (k − 2 when a is held at its
//! bound, the interval then being conditional on it), carried to the curve through its gradient, and Student's t
//! quantile on those degrees of freedom. It describes the uncertainty of the fit to these points under the model;
//! it cannot describe whether the model holds beyond them.

use super::student_t;

/// A fitted curve `a − b·n^(−c)`.
#[derive(Debug, Clone, PartialEq)]
pub struct LearningCurve {
    pub a: f64,
    pub b: f64,
    pub c: f64,
    /// Covariance of (a, b, c).
    pub covariance: [[f64; 3]; 3],
    /// The asymptote is held at its bound of 1 (then b and c alone were estimated).
    pub bounded: bool,
    /// Degrees of freedom of the residual variance (points − estimated parameters).
    pub df: usize,
    /// Student's t quantile for the interval's two-sided level.
    pub t: f64,
    /// Two-sided level of the interval (0.95).
    pub level: f64,
}

/// One point of the fitted curve with its interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Predicted {
    pub fit: f64,
    pub low: f64,
    pub high: f64,
}

/// The largest asymptote: a score cannot exceed 1.
const A_MAX: f64 = 1.0;
const C_LOW: f64 = 0.01;
const C_HIGH: f64 = 10.0;
const GRID: usize = 241;

/// Fit the curve to scores `y` at sizes `n` with weights `w`, and a two-sided `level` interval. At least four
/// distinct sizes are needed (three parameters and one degree of freedom for the interval); the reason is returned
/// when the points cannot support a fit.
pub fn fit(n: &[f64], y: &[f64], w: &[f64], level: f64) -> Result<LearningCurve, String> {
    let k = n.len();
    let mut distinct: Vec<f64> = n.to_vec();
    distinct.sort_by(f64::total_cmp);
    distinct.dedup();
    if distinct.len() < 4 {
        return Err(format!(
            "a learning curve has three parameters and needs measurements at four or more sizes; there are {}",
            distinct.len()
        ));
    }
    if n.iter().any(|&v| v <= 0.0) || w.iter().any(|&v| v <= 0.0) {
        return Err("sizes and weights must be positive".into());
    }
    let rss = |c: f64| linear_part(n, y, w, c).2;
    // The grid: log-spaced exponents; the best one, then golden-section search between its neighbours.
    let grid: Vec<f64> = (0..GRID)
        .map(|i| C_LOW * libm::pow(C_HIGH / C_LOW, i as f64 / (GRID - 1) as f64))
        .collect();
    let rss_grid: Vec<f64> = grid.iter().map(|&c| rss(c)).collect();
    let best = (0..GRID)
        .min_by(|&i, &j| rss_grid[i].total_cmp(&rss_grid[j]).then(i.cmp(&j)))
        .expect("a grid");
    if best == 0 || best == GRID - 1 {
        return Err(
            "the measured scores do not bend like a learning curve (the fitted decay ran to the end of its range), \
             so the curve cannot be extrapolated"
                .into(),
        );
    }
    let c = golden_section(&rss, grid[best - 1], grid[best + 1]);
    let (a, b, residual) = linear_part(n, y, w, c);
    let bounded = a >= A_MAX;
    // The Jacobian of a − b·n^(−c) in (a, b, c), and JᵀWJ; with a held at its bound, its row and column are left
    // out (set to the identity so the inverse keeps the other two, then zeroed).
    let mut jtj = [[0.0f64; 3]; 3];
    for i in 0..k {
        let mut g = gradient(n[i], b, c);
        if bounded {
            g[0] = 0.0;
        }
        for r in 0..3 {
            for s in 0..3 {
                jtj[r][s] += w[i] * g[r] * g[s];
            }
        }
    }
    if bounded {
        jtj[0][0] = 1.0;
    }
    let mut inverse = invert3(&jtj).ok_or_else(|| {
        "the measured scores do not determine the learning curve's parameters (they are flat or nearly so)"
            .to_string()
    })?;
    if bounded {
        inverse[0][0] = 0.0;
    }
    let df = k - if bounded { 2 } else { 3 };
    let s2 = residual / df as f64;
    let mut covariance = [[0.0f64; 3]; 3];
    for r in 0..3 {
        for s in 0..3 {
            covariance[r][s] = s2 * inverse[r][s];
        }
    }
    Ok(LearningCurve {
        a,
        b,
        c,
        covariance,
        bounded,
        df,
        t: student_t::quantile(0.5 + level / 2.0, df as f64),
        level,
    })
}

impl LearningCurve {
    /// The fitted score at size `n`, with its interval.
    pub fn predict(&self, n: f64) -> Predicted {
        let fit = self.a - self.b * libm::pow(n, -self.c);
        let g = gradient(n, self.b, self.c);
        let mut var = 0.0;
        for r in 0..3 {
            for s in 0..3 {
                var += g[r] * self.covariance[r][s] * g[s];
            }
        }
        let half = self.t * libm::sqrt(var.max(0.0));
        Predicted {
            fit,
            low: fit - half,
            high: fit + half,
        }
    }
}

/// ∂/∂(a, b, c) of a − b·n^(−c).
fn gradient(n: f64, b: f64, c: f64) -> [f64; 3] {
    let z = libm::pow(n, -c);
    [1.0, -z, b * z * libm::log(n)]
}

/// For a fixed exponent: the weighted least-squares (a, b), with a held at 1 when it would exceed it, and the
/// residual sum of squares.
fn linear_part(n: &[f64], y: &[f64], w: &[f64], c: f64) -> (f64, f64, f64) {
    let z: Vec<f64> = n.iter().map(|&v| libm::pow(v, -c)).collect();
    let sw: f64 = w.iter().sum();
    let mut zm = 0.0;
    let mut ym = 0.0;
    for i in 0..n.len() {
        zm += w[i] * z[i];
        ym += w[i] * y[i];
    }
    zm /= sw;
    ym /= sw;
    let (mut szz, mut szy) = (0.0, 0.0);
    for i in 0..n.len() {
        szz += w[i] * (z[i] - zm) * (z[i] - zm);
        szy += w[i] * (z[i] - zm) * (y[i] - ym);
    }
    let slope = if szz > 0.0 { szy / szz } else { 0.0 };
    let (mut a, mut b) = (ym - slope * zm, -slope);
    if a > A_MAX {
        // 1 − y = b·z through the origin: b = Σw·z·(1 − y) / Σw·z².
        let (mut zy, mut zz) = (0.0, 0.0);
        for i in 0..n.len() {
            zy += w[i] * z[i] * (A_MAX - y[i]);
            zz += w[i] * z[i] * z[i];
        }
        (a, b) = (A_MAX, zy / zz);
    }
    let mut rss = 0.0;
    for i in 0..n.len() {
        let r = y[i] - (a - b * z[i]);
        rss += w[i] * r * r;
    }
    (a, b, rss)
}

/// The minimum of a unimodal function on [lo, hi] by golden-section search, to the last bits.
fn golden_section(f: &dyn Fn(f64) -> f64, mut lo: f64, mut hi: f64) -> f64 {
    let ratio = (libm::sqrt(5.0) - 1.0) / 2.0;
    let mut x1 = hi - ratio * (hi - lo);
    let mut x2 = lo + ratio * (hi - lo);
    let (mut f1, mut f2) = (f(x1), f(x2));
    for _ in 0..200 {
        if hi - lo <= 1e-13 * hi {
            break;
        }
        if f1 <= f2 {
            hi = x2;
            x2 = x1;
            f2 = f1;
            x1 = hi - ratio * (hi - lo);
            f1 = f(x1);
        } else {
            lo = x1;
            x1 = x2;
            f1 = f2;
            x2 = lo + ratio * (hi - lo);
            f2 = f(x2);
        }
    }
    0.5 * (lo + hi)
}

/// The inverse of a symmetric 3 × 3 matrix by cofactors, or `None` when it is singular or nearly so.
fn invert3(m: &[[f64; 3]; 3]) -> Option<[[f64; 3]; 3]> {
    let cof = |r: usize, c: usize| {
        let (r1, r2) = ((r + 1) % 3, (r + 2) % 3);
        let (c1, c2) = ((c + 1) % 3, (c + 2) % 3);
        m[r1][c1] * m[r2][c2] - m[r1][c2] * m[r2][c1]
    };
    let det = m[0][0] * cof(0, 0) + m[0][1] * cof(0, 1) + m[0][2] * cof(0, 2);
    // Relative to the product of the diagonal: a determinant this small means dependent columns.
    let scale = m[0][0] * m[1][1] * m[2][2];
    if !(det.is_finite() && scale > 0.0 && det.abs() > 1e-12 * scale) {
        return None;
    }
    let mut inv = [[0.0; 3]; 3];
    for (r, row) in inv.iter_mut().enumerate() {
        for (c, v) in row.iter_mut().enumerate() {
            *v = cof(c, r) / det;
        }
    }
    Some(inv)
}

#[cfg(test)]
mod tests {
    use super::*;

    const N: [f64; 6] = [5.0, 8.0, 13.0, 21.0, 34.0, 56.0];

    #[test]
    fn recovers_an_exact_curve() {
        let y: Vec<f64> = N.iter().map(|&n| 0.8 - 0.6 * libm::pow(n, -0.7)).collect();
        let curve = fit(&N, &y, &N, 0.95).unwrap();
        assert!((curve.a - 0.8).abs() < 1e-9, "{curve:?}");
        assert!((curve.b - 0.6).abs() < 1e-8, "{curve:?}");
        assert!((curve.c - 0.7).abs() < 1e-8, "{curve:?}");
        let p = curve.predict(200.0);
        assert!((p.fit - (0.8 - 0.6 * libm::pow(200.0, -0.7))).abs() < 1e-9);
        assert!(p.high - p.low < 1e-6, "no residual, no width: {p:?}");
    }

    #[test]
    fn matches_scipy_curve_fit_and_its_covariance() {
        // scipy 1.17.1: scipy.optimize.curve_fit(lambda n, a, b, c: a - b * n**-c, N, Y, p0=[0.7, 0.8, 0.5],
        // sigma=1/sqrt(N), absolute_sigma=False) (weights N), and the delta-method interval with
        // scipy.stats.t.ppf(0.975, 3).
        let y = [0.41, 0.47, 0.55, 0.58, 0.63, 0.655];
        let curve = fit(&N, &y, &N, 0.95).unwrap();
        let close = |a: f64, b: f64, tol: f64| (a - b).abs() < tol;
        assert!(close(curve.a, 0.7665620952506134, 1e-7), "{curve:?}");
        assert!(close(curve.b, 0.7951930691581796, 1e-7), "{curve:?}");
        assert!(close(curve.c, 0.49030501010023214, 1e-7), "{curve:?}");
        let cov = [
            [
                0.002566951215296934,
                -0.003742821763589598,
                -0.006613216317115574,
            ],
            [
                -0.003742821763589598,
                0.008199249943646205,
                0.010768484376275327,
            ],
            [
                -0.006613216317115574,
                0.010768484376275327,
                0.017539382889587618,
            ],
        ];
        for (ours, theirs) in curve.covariance.iter().flatten().zip(cov.iter().flatten()) {
            assert!(
                close(*ours, *theirs, 1e-6 * theirs.abs()),
                "{:?}",
                curve.covariance
            );
        }
        for (n0, fit_, low, high) in [
            (
                56.0,
                0.6560710103496061,
                0.6413791139850481,
                0.6707629067141642,
            ),
            (
                112.0,
                0.6879063006396315,
                0.6554400717608155,
                0.7203725295184475,
            ),
            (
                224.0,
                0.7105690345305754,
                0.6575259149495696,
                0.7636121541115812,
            ),
        ] {
            let p = curve.predict(n0);
            assert!(close(p.fit, fit_, 1e-8), "{n0}: {p:?}");
            assert!(close(p.low, low, 1e-7), "{n0}: {p:?}");
            assert!(close(p.high, high, 1e-7), "{n0}: {p:?}");
        }
    }

    #[test]
    fn holds_the_asymptote_at_one_when_the_scores_keep_rising() {
        // scipy 1.17.1: curve_fit(lambda n, b, c: 1 - b * n**-c, N, Y, p0=[0.5, 0.3], sigma=1/sqrt(N)) (the same
        // model with a = 1), and the delta-method interval with scipy.stats.t.ppf(0.975, 4). Unbounded, these
        // points pull a to 376 with c = 0.0002.
        let y = [0.518, 0.537, 0.584, 0.605, 0.653, 0.686];
        let curve = fit(&N, &y, &N, 0.95).unwrap();
        assert!(
            curve.bounded && curve.a == 1.0 && curve.df == 4,
            "{curve:?}"
        );
        assert!((curve.b - 0.6799090706294763).abs() < 1e-7, "{curve:?}");
        assert!((curve.c - 0.18968338833772364).abs() < 1e-7, "{curve:?}");
        for (n0, fit_, low, high) in [
            (
                112.0,
                0.7221897808081638,
                0.7062454279721152,
                0.7381341336442123,
            ),
            (
                224.0,
                0.7564165218215549,
                0.7371507895097273,
                0.7756822541333825,
            ),
        ] {
            let p = curve.predict(n0);
            assert!((p.fit - fit_).abs() < 1e-8, "{n0}: {p:?}");
            assert!((p.low - low).abs() < 1e-7, "{n0}: {p:?}");
            assert!((p.high - high).abs() < 1e-7, "{n0}: {p:?}");
        }
    }

    #[test]
    fn refuses_flat_points_and_too_few_sizes() {
        assert!(fit(&N, &[0.5; 6], &N, 0.95).is_err());
        assert!(fit(&N[..3], &[0.4, 0.5, 0.55], &N[..3], 0.95).is_err());
    }
}
