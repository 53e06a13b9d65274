//! Summaries across repeats, permutation p-values, the binomial chance threshold, cluster tests, group-level
//! tests across the sessions of a study, scores of continuous and circular decoders ([`regression`],
//! [`circular`]), and Student's t ([`student_t`]) and the inverse power-law learning curve ([`learning_curve`]) of
//! the power analysis's extrapolation.

pub mod binomial;
pub mod circular;
pub mod clusters;
pub mod fdr;
pub mod group;
pub mod intervals;
pub mod learning_curve;
pub mod regression;
pub mod roc;
pub mod student_t;

use serde::{Deserialize, Serialize};

/// A score over cross-validation repeats: its mean, and the variability over repeats (SD and central 95 % range),
/// which shows how much the estimate depends on how the trials were split, not how it would vary over new data;
/// and, where an analysis computes one, a confidence interval ([`intervals`]).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Spread {
    pub mean: f64,
    /// Sample SD (divisor n − 1) over repeats; 0 for a single value.
    pub sd: f64,
    /// 2.5th percentile over repeats.
    pub p2_5: f64,
    /// 97.5th percentile over repeats.
    pub p97_5: f64,
    /// 95 % confidence interval [low, high] of the mean.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ci: Option<[f64; 2]>,
    /// How `ci` was computed.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ci_method: Option<String>,
}

impl Spread {
    pub fn of(values: &[f64]) -> Spread {
        Spread {
            mean: mean(values),
            sd: sd(values),
            p2_5: percentile(values, 2.5),
            p97_5: percentile(values, 97.5),
            ci: None,
            ci_method: None,
        }
    }

    /// The spread of `values` with a confidence interval of their mean ([`intervals::score_interval`]).
    pub fn with_interval(
        values: &[f64],
        fold_scores: &[f64],
        test_over_train: f64,
        n_test: f64,
    ) -> Spread {
        let mut s = Spread::of(values);
        s.ci = Some(intervals::score_interval(
            fold_scores,
            test_over_train,
            s.mean,
            n_test,
        ));
        s.ci_method = Some(intervals::METHOD.to_string());
        s
    }
}

/// Arithmetic mean, summed in the given order (callers pass values in task order, so the sum is reproducible).
pub fn mean(values: &[f64]) -> f64 {
    if values.is_empty() {
        return f64::NAN;
    }
    values.iter().sum::<f64>() / values.len() as f64
}

/// Sample standard deviation (divisor n − 1); 0 for fewer than two values.
pub fn sd(values: &[f64]) -> f64 {
    if values.len() < 2 {
        return 0.0;
    }
    let m = mean(values);
    (values.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (values.len() - 1) as f64).sqrt()
}

/// Percentile by linear interpolation between order statistics (definition 7 of Hyndman & Fan, 1996; the default
/// of numpy.percentile and R's quantile).
pub fn percentile(values: &[f64], q: f64) -> f64 {
    if values.is_empty() {
        return f64::NAN;
    }
    let mut v = values.to_vec();
    v.sort_by(f64::total_cmp);
    let h = (v.len() - 1) as f64 * q / 100.0;
    let lo = h.floor() as usize;
    let hi = (lo + 1).min(v.len() - 1);
    v[lo] + (h - lo as f64) * (v[hi] - v[lo])
}

/// Permutation p-value `(b + 1)/(m + 1)`, `b` = null scores at least as large as the observed one (Phipson & Smyth,
/// 2010): never zero, and exact for a test that counts the observed labelling as one of the permutations.
pub fn permutation_p(observed: f64, null: &[f64]) -> f64 {
    let b = null.iter().filter(|&&s| s >= observed).count();
    (b + 1) as f64 / (null.len() + 1) as f64
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn percentile_matches_numpy_linear() {
        // numpy.percentile([1, 2, 3, 4], [2.5, 50, 97.5]) = [1.075, 2.5, 3.925] (numpy's documented default method).
        let v = [4.0, 1.0, 3.0, 2.0];
        assert!((percentile(&v, 2.5) - 1.075).abs() < 1e-12);
        assert!((percentile(&v, 50.0) - 2.5).abs() < 1e-12);
        assert!((percentile(&v, 97.5) - 3.925).abs() < 1e-12);
    }

    #[test]
    fn sd_uses_n_minus_one() {
        assert!((sd(&[1.0, 2.0, 3.0, 4.0]) - (5.0f64 / 3.0).sqrt()).abs() < 1e-12);
        assert_eq!(sd(&[3.0]), 0.0);
    }

    #[test]
    fn p_value_counts_ties_against_the_observation() {
        assert_eq!(permutation_p(0.8, &[0.5, 0.8, 0.9, 0.1]), 3.0 / 5.0);
        assert_eq!(permutation_p(1.0, &[0.5; 99]), 0.01);
    }
}
