//! The accuracy that guessing reaches by luck: binomial chance threshold for a given number of test trials.
//!
//! Combrisson & Jerbi (2015) show that with few trials, accuracies well above the theoretical chance level occur
//! by chance, and give the threshold as the (1 − α) quantile of Binomial(n, 1/classes), divided by n. It assumes
//! independent test trials; cross-validated predictions are not quite independent, which is why the label-shuffle
//! control is the primary test and this threshold is reported beside it.

/// Smallest k with P(X ≤ k) ≥ q for X ~ Binomial(n, p) (the quantile called `binoinv` in several packages).
pub fn quantile(q: f64, n: u64, p: f64) -> u64 {
    let mut cdf = 0.0;
    for k in 0..=n {
        cdf += pmf(k, n, p);
        // A relative slack so that a CDF that should equal q exactly is not missed by round-off.
        if cdf >= q * (1.0 - 1e-12) {
            return k;
        }
    }
    n
}

/// P(X = k) for X ~ Binomial(n, p), through log-gamma so large n do not overflow.
pub fn pmf(k: u64, n: u64, p: f64) -> f64 {
    if p <= 0.0 {
        return if k == 0 { 1.0 } else { 0.0 };
    }
    if p >= 1.0 {
        return if k == n { 1.0 } else { 0.0 };
    }
    let (k, n) = (k as f64, n as f64);
    let log_choose = libm::lgamma(n + 1.0) - libm::lgamma(k + 1.0) - libm::lgamma(n - k + 1.0);
    libm::exp(log_choose + k * libm::log(p) + (n - k) * libm::log(1.0 - p))
}

/// Accuracy threshold (fraction correct) that chance exceeds with probability at most `alpha`.
pub fn chance_threshold(n_trials: u64, n_classes: usize, alpha: f64) -> f64 {
    quantile(1.0 - alpha, n_trials, 1.0 / n_classes as f64) as f64 / n_trials as f64
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pmf_sums_to_one_and_matches_a_hand_value() {
        // P(X = 2 | n = 4, p = 0.5) = 6/16.
        assert!((pmf(2, 4, 0.5) - 0.375).abs() < 1e-12);
        let total: f64 = (0..=50).map(|k| pmf(k, 50, 0.3)).sum();
        assert!((total - 1.0).abs() < 1e-10);
    }

    #[test]
    fn quantile_is_the_smallest_k_reaching_q() {
        // n = 10, p = 0.5: P(X ≤ 7) = 0.9453, P(X ≤ 8) = 0.9893 (scipy 1.17.1 binom.cdf), so the 95 % quantile is 8.
        assert_eq!(quantile(0.95, 10, 0.5), 8);
        // n = 100, p = 0.5: P(X ≤ 58) = 0.9557, P(X ≤ 57) = 0.9334 (scipy 1.17.1 binom.cdf), so 58.
        assert_eq!(quantile(0.95, 100, 0.5), 58);
        assert!((chance_threshold(100, 2, 0.05) - 0.58).abs() < 1e-12);
    }
}
