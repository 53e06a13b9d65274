//! A confidence interval for a score estimated by repeated k-fold cross-validation.
//!
//! The spread of a score over cross-validation repeats is not a confidence interval: every repeat re-splits the
//! same trials, so it shows how much the estimate depends on the split, not how much it would vary over new data
//! (in our simulations the SD over repeats was about two thirds of the SD across independent datasets). No unbiased
//! estimator of the variance of a k-fold estimate exists (Bengio & Grandvalet, 2004): the folds share training
//! trials, and their scores are correlated by an amount the data cannot tell.
//!
//! The interval reported ([`score_interval`]) takes, at each end, the wider of two intervals from the literature:
//! * the **corrected resampled t** of Nadeau & Bengio (2003), in the form Bouckaert & Frank (2004) give for r
//!   repeats of k-fold cross-validation: with the J = r·k fold scores a_j, their sample variance s², and n₂/n₁ the
//!   ratio of test to training trials of a fold, the variance of the mean is taken as `(1/J + n₂/n₁)·s²` instead
//!   of the naive `s²/J` (the term n₂/n₁ stands for the correlation between folds that share training trials):
//!   `mean ± t(J − 1; 0.975)·√((1/J + n₂/n₁)·s²)`. It carries the variability that comes from the training sets,
//!   but its s² collapses when every fold scores the same (100 % in every fold gives an interval of width 0);
//! * the **Wilson interval** (Wilson, 1927) for a proportion on the n test trials of a repeat (for balanced
//!   accuracy, on the effective count `K²/Σ 1/n_c` of K classes with n_c test trials each, which gives the
//!   binomial variance of a mean of K recalls). It is the uncertainty of n test trials even for a fixed decoder,
//!   behaves at 0 and 1, and is known to be optimistic for cross-validation because it ignores the training sets
//!   (Varoquaux, 2018).
//!
//! Its target is the expected score of the decoder trained on a training fold's worth of trials (what
//! cross-validation estimates). In our simulations (README, "Confidence interval") it covered that target in
//! 91–100 % of datasets: slightly below 95 % near chance with few trials, where the training sets add variance
//! that neither part sees, and above it near 100 % accuracy. `tests/intervals.rs` checks its coverage on 300
//! invented datasets with a known expected accuracy.

/// Coverage of the reported intervals.
pub const LEVEL: f64 = 0.95;

/// What the JSON names the method by.
pub const METHOD: &str =
    "at each end, the wider of two intervals: Wilson's on the pooled test trials (Wilson 1927) and the \
     corrected resampled t over the fold scores of every repeat (Nadeau & Bengio 2003)";

/// The reported interval at [`LEVEL`] for a score averaged over repeats (`centre`): the wider at each end of the
/// corrected resampled t over `fold_scores` (fold test to training size ratio `test_over_train`) and the Wilson
/// interval on `n_test` trials (see the module). Within [0, 1].
pub fn score_interval(
    fold_scores: &[f64],
    test_over_train: f64,
    centre: f64,
    n_test: f64,
) -> [f64; 2] {
    let [wl, wh] = wilson(centre, n_test, LEVEL);
    match corrected_resampled_t(fold_scores, test_over_train, centre, LEVEL) {
        Some([tl, th]) => [wl.min(tl), wh.max(th)],
        None => [wl, wh],
    }
}

/// Wilson's score interval at `level` for a proportion `p` observed on `n` trials (Wilson, 1927).
pub fn wilson(p: f64, n: f64, level: f64) -> [f64; 2] {
    let z = normal_quantile(0.5 + level / 2.0);
    let z2n = z * z / n;
    let centre = (p + z2n / 2.0) / (1.0 + z2n);
    let half = z * (p * (1.0 - p) / n + z2n / (4.0 * n)).sqrt() / (1.0 + z2n);
    [(centre - half).max(0.0), (centre + half).min(1.0)]
}

/// Quantile of the standard normal distribution: bisection on Φ(x) = erfc(−x/√2)/2.
fn normal_quantile(p: f64) -> f64 {
    let (mut lo, mut hi) = (-40.0, 40.0);
    for _ in 0..100 {
        let mid = 0.5 * (lo + hi);
        if 0.5 * libm::erfc(-mid / std::f64::consts::SQRT_2) < p {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// The corrected resampled t interval at `level` around `centre`, from the fold scores of every repeat
/// (`values`, J of them) and the ratio of test to training trials of a fold; clipped to [0, 1] (a score's range,
/// which never excludes the true value). `None` for fewer than two fold scores.
pub fn corrected_resampled_t(
    values: &[f64],
    test_over_train: f64,
    centre: f64,
    level: f64,
) -> Option<[f64; 2]> {
    let j = values.len();
    if j < 2 {
        return None;
    }
    let s = super::sd(values);
    let half = t_quantile(0.5 + level / 2.0, (j - 1) as f64)
        * ((1.0 / j as f64 + test_over_train) * s * s).sqrt();
    Some([(centre - half).max(0.0), (centre + half).min(1.0)])
}

/// Quantile of Student's t distribution with `df` degrees of freedom, for `p` in (0, 1): bisection on the
/// distribution function (60 halvings of a bracket that doubles until it holds the quantile).
pub fn t_quantile(p: f64, df: f64) -> f64 {
    assert!(
        p > 0.0 && p < 1.0 && df > 0.0,
        "t quantile of p = {p}, df = {df}"
    );
    if p < 0.5 {
        return -t_quantile(1.0 - p, df);
    }
    let mut hi = 1.0;
    while t_cdf(hi, df) < p {
        hi *= 2.0;
    }
    let mut lo = 0.0;
    for _ in 0..60 {
        let mid = 0.5 * (lo + hi);
        if t_cdf(mid, df) < p {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// P(T ≤ t) for Student's t with `df` degrees of freedom: `1 − I_x(df/2, 1/2)/2` with `x = df/(df + t²)` for
/// t ≥ 0 (Abramowitz & Stegun 26.7.1 with 26.5.27).
pub fn t_cdf(t: f64, df: f64) -> f64 {
    let tail = 0.5 * beta_regularized(df / 2.0, 0.5, df / (df + t * t));
    if t >= 0.0 {
        1.0 - tail
    } else {
        tail
    }
}

/// The regularised incomplete beta function I_x(a, b), by its continued fraction (modified Lentz's method;
/// Press et al., Numerical Recipes, 3rd ed., §6.4), using the symmetry I_x(a, b) = 1 − I_{1−x}(b, a) where the
/// fraction converges slowly.
fn beta_regularized(a: f64, b: f64, x: f64) -> f64 {
    if x <= 0.0 {
        return 0.0;
    }
    if x >= 1.0 {
        return 1.0;
    }
    let log_front = libm::lgamma(a + b) - libm::lgamma(a) - libm::lgamma(b)
        + a * libm::log(x)
        + b * libm::log(1.0 - x);
    if x < (a + 1.0) / (a + b + 2.0) {
        libm::exp(log_front) * continued_fraction(a, b, x) / a
    } else {
        1.0 - libm::exp(log_front) * continued_fraction(b, a, 1.0 - x) / b
    }
}

fn continued_fraction(a: f64, b: f64, x: f64) -> f64 {
    const TINY: f64 = 1e-300;
    let (qab, qap, qam) = (a + b, a + 1.0, a - 1.0);
    let mut c = 1.0;
    let mut d = 1.0 - qab * x / qap;
    if d.abs() < TINY {
        d = TINY;
    }
    d = 1.0 / d;
    let mut h = d;
    for m in 1..=300 {
        let m = m as f64;
        let m2 = 2.0 * m;
        let aa = m * (b - m) * x / ((qam + m2) * (a + m2));
        d = 1.0 + aa * d;
        if d.abs() < TINY {
            d = TINY;
        }
        c = 1.0 + aa / c;
        if c.abs() < TINY {
            c = TINY;
        }
        d = 1.0 / d;
        h *= d * c;
        let aa = -(a + m) * (qab + m) * x / ((a + m2) * (qap + m2));
        d = 1.0 + aa * d;
        if d.abs() < TINY {
            d = TINY;
        }
        c = 1.0 + aa / c;
        if c.abs() < TINY {
            c = TINY;
        }
        d = 1.0 / d;
        let del = d * c;
        h *= del;
        if (del - 1.0).abs() < 1e-15 {
            break;
        }
    }
    h
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn t_quantiles_match_scipy() {
        // scipy 1.17.1: stats.t.ppf(0.975, [1, 4, 9, 49, 499]).
        let want = [
            (1.0, 12.706204736174694),
            (4.0, 2.7764451051977934),
            (9.0, 2.262157162798205),
            (49.0, 2.0095752371292392),
            (499.0, 1.9647293909876886),
        ];
        for (df, q) in want {
            let got = t_quantile(0.975, df);
            assert!((got - q).abs() < 1e-9 * q, "df {df}: {got} vs {q}");
        }
        // Symmetry, and the median.
        assert!((t_quantile(0.025, 9.0) + t_quantile(0.975, 9.0)).abs() < 1e-12);
        assert!(t_quantile(0.5, 3.0).abs() < 1e-12);
    }

    #[test]
    fn wilson_matches_its_formula_and_stays_in_range() {
        // 30 of 40 correct: scipy 1.17.1 stats.binomtest(30, 40).proportion_ci(method='wilson') =
        // (0.5980603857923197, 0.858128813609037); the normal quantile is stats.norm.ppf(0.975).
        let [lo, hi] = wilson(0.75, 40.0, 0.95);
        assert!((lo - 0.5980603857923197).abs() < 1e-9, "{lo}");
        assert!((hi - 0.858128813609037).abs() < 1e-9, "{hi}");
        // Every trial correct: an interval below 1, not a point (the corrected t alone gives a point there).
        let [lo, hi] = score_interval(&[1.0; 10], 0.25, 1.0, 40.0);
        assert!(lo < 0.95 && hi == 1.0, "{lo} {hi}");
        assert!((normal_quantile(0.975) - 1.959963984540054).abs() < 1e-12);
    }

    #[test]
    fn corrected_interval_by_hand() {
        // Four fold scores 0.5, 0.6, 0.7, 0.8: s² = 0.016667; 4 folds so n₂/n₁ = 1/3; variance (1/4 + 1/3)·s² =
        // 0.0097222; t(3; 0.975) = 3.1824463052837078 (scipy 1.17.1); half-width 0.313797.
        let v = [0.5, 0.6, 0.7, 0.8];
        let [lo, hi] = corrected_resampled_t(&v, 1.0 / 3.0, 0.65, 0.95).unwrap();
        let half = 3.1824463052837078 * ((0.25 + 1.0 / 3.0) * (0.05f64 / 3.0)).sqrt();
        assert!((lo - (0.65 - half)).abs() < 1e-9, "{lo}");
        assert!((hi - (0.65 + half).min(1.0)).abs() < 1e-9, "{hi}");
        assert!(corrected_resampled_t(&[0.7], 0.25, 0.7, 0.95).is_none());
    }
}
