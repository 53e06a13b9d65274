//! Group-level inference across the sessions of a study, or across its subjects (each subject's sessions averaged
//! first).
//!
//! Every session was decoded with its own label-shuffle null: `m` null scores, each the same statistic as the
//! session's observed score under permuted labels. Each session's *pool* is its observed score and its `m` null
//! scores: the observed labelling counts as one of the permutations, as in Allefeld et al. (2016), so that under the
//! null the observed scores are one draw like any other and the tests are exact up to the draws' Monte Carlo error
//! (without it the empirical nulls are slightly narrower than the true ones). The group tests combine the pools
//! without a parametric model:
//!
//! * **Permutation test of the group mean** (Stelzer, Chen & Turner 2013): one draw of the second level picks one
//!   score of every session's pool at random, averages within each unit (subject, or session when no subjects are
//!   given) and then over units; many draws make the null distribution of the group mean, and
//!   p = (b + 1)/(B + 1), b the draws whose mean reaches the observed one (Phipson & Smyth 2010). Over time the same
//!   draws, each a whole null curve per session, give the null curves of the cluster test.
//! * **Prevalence inference** (Allefeld, Görgen & Haynes 2016): the statistic is the *minimum* over units, computed
//!   on the same draws. Its p-value tests the global null (no unit carries information); the prevalence null "the
//!   effect is present in at most a fraction γ₀ of the population" is rejected when
//!   ((1 − γ₀) p^(1/N) + γ₀)^N ≤ α, so the largest γ₀ rejected is (α^(1/N) − p^(1/N)) / (1 − p^(1/N)).
//! * The **second-level t-test** of unit means against chance is given only with its caution: accuracies cannot
//!   be below chance in truth, so its null is the global null and a significant result does not show that the
//!   effect is typical of the population (Allefeld et al. 2016).
//!
//! The draws come from one random stream, so the result is the same on every face. Sums run in session order, then
//! unit order.

use super::mean;
use crate::rng::{below, task_rng, Stream};
use serde::{Deserialize, Serialize};

/// The caution every second-level t-test carries.
pub const T_TEST_CAUTION: &str = "a t-test of accuracies against chance tests the global null (no session or \
     subject carries information) because accuracy cannot truly fall below chance; a significant result does not \
     show that the effect is typical of the population (Allefeld, Görgen & Haynes 2016): read the prevalence \
     bound for that";

/// Which sessions make up each unit of the second level (a subject, or a single session).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Units {
    pub members: Vec<Vec<usize>>,
}

impl Units {
    pub fn len(&self) -> usize {
        self.members.len()
    }

    pub fn is_empty(&self) -> bool {
        self.members.is_empty()
    }

    /// Each unit's mean of a per-session value.
    pub fn means(&self, per_session: &[f64]) -> Vec<f64> {
        self.members
            .iter()
            .map(|m| m.iter().map(|&s| per_session[s]).sum::<f64>() / m.len() as f64)
            .collect()
    }
}

/// The second-level draws: for each of `draws` draws, one index per session into that session's pool of
/// `pool_sizes[s]` scores, from the stream `(seed, GroupNull)`.
pub fn picks(seed: u64, pool_sizes: &[usize], draws: usize) -> Vec<Vec<usize>> {
    let mut rng = task_rng(seed, Stream::GroupNull, 0, 0);
    (0..draws)
        .map(|_| pool_sizes.iter().map(|&m| below(&mut rng, m)).collect())
        .collect()
}

/// The group null: for each draw, the mean over units of each unit's mean of its sessions' picked values, at every
/// window. `null[s][j]` is entry j of session s's pool (one value per window).
pub fn group_null(units: &Units, null: &[Vec<Vec<f64>>], picks: &[Vec<usize>]) -> Vec<Vec<f64>> {
    let windows = null.first().and_then(|s| s.first()).map_or(0, Vec::len);
    picks
        .iter()
        .map(|pick| {
            (0..windows)
                .map(|w| {
                    let per_session: Vec<f64> = pick
                        .iter()
                        .enumerate()
                        .map(|(s, &j)| null[s][j][w])
                        .collect();
                    mean(&units.means(&per_session))
                })
                .collect()
        })
        .collect()
}

/// The minimum statistic of each draw: the smallest unit mean of the picked pool values (one value per session).
pub fn minimum_null(units: &Units, null: &[Vec<f64>], picks: &[Vec<usize>]) -> Vec<f64> {
    picks
        .iter()
        .map(|pick| {
            let per_session: Vec<f64> = pick.iter().enumerate().map(|(s, &j)| null[s][j]).collect();
            units
                .means(&per_session)
                .into_iter()
                .fold(f64::INFINITY, f64::min)
        })
        .collect()
}

/// Prevalence inference from the minimum statistic (Allefeld, Görgen & Haynes 2016).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Prevalence {
    /// The smallest unit score, observed.
    pub minimum: f64,
    /// p-value of the global null (no unit carries information), (b + 1)/(B + 1) over the draws.
    pub global_p: f64,
    /// The largest γ₀ for which "the effect is present in at most γ₀ of the population" is rejected at `alpha`;
    /// null when the global null is not rejected.
    pub gamma0: Option<f64>,
    /// The largest γ₀ these draws could ever establish (at p = 1/(B + 1)).
    pub gamma0_limit: f64,
    /// Whether the majority null (γ ≤ 0.5) is rejected: the effect is present in most of the population.
    pub majority: bool,
    pub alpha: f64,
    pub units: usize,
}

/// Prevalence inference on the units' observed scores and the minimum statistic of each draw.
pub fn prevalence(observed_units: &[f64], minimum_null: &[f64], alpha: f64) -> Prevalence {
    let minimum = observed_units.iter().copied().fold(f64::INFINITY, f64::min);
    let global_p = super::permutation_p(minimum, minimum_null);
    let n = observed_units.len();
    let gamma0 = largest_gamma0(global_p, n, alpha);
    Prevalence {
        minimum,
        global_p,
        gamma0,
        gamma0_limit: largest_gamma0(1.0 / (minimum_null.len() as f64 + 1.0), n, alpha)
            .unwrap_or(0.0),
        majority: gamma0.is_some_and(|g| g >= 0.5),
        alpha,
        units: n,
    }
}

/// The largest prevalence γ₀ whose null is rejected at `alpha` given the global-null p-value `p` over `n` units:
/// (α^(1/n) − p^(1/n)) / (1 − p^(1/n)) (Allefeld, Görgen & Haynes 2016); `None` when p > α.
pub fn largest_gamma0(p: f64, n: usize, alpha: f64) -> Option<f64> {
    if p > alpha || n == 0 {
        return None;
    }
    let root = |v: f64| libm::pow(v, 1.0 / n as f64);
    let (a, q) = (root(alpha), root(p));
    Some(((a - q) / (1.0 - q)).clamp(0.0, 1.0))
}

/// A one-sample t-test of the unit scores against chance, one-sided (greater), with its caution.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TTest {
    pub t: f64,
    pub df: usize,
    pub p_value: f64,
    pub caution: String,
}

/// One-sided one-sample t-test of `values` against `mu`; None for fewer than two values or no spread.
pub fn t_test_greater(values: &[f64], mu: f64) -> Option<TTest> {
    let n = values.len();
    let sd = super::sd(values);
    if n < 2 || sd == 0.0 {
        return None;
    }
    let t = (mean(values) - mu) / (sd / (n as f64).sqrt());
    let df = n - 1;
    Some(TTest {
        t,
        df,
        p_value: 1.0 - student_t_cdf(t, df as f64),
        caution: T_TEST_CAUTION.to_string(),
    })
}

/// The central `level` interval of the mean of `values` by the t distribution (mean ± t · SD/√n), describing the
/// spread of the units' scores; None for fewer than two values.
pub fn t_interval(values: &[f64], level: f64) -> Option<(f64, f64)> {
    let n = values.len();
    if n < 2 {
        return None;
    }
    let half = student_t_quantile(0.5 + level / 2.0, (n - 1) as f64) * super::sd(values)
        / (n as f64).sqrt();
    let m = mean(values);
    Some((m - half, m + half))
}

/// P(T ≤ t) for Student's t with `df` degrees of freedom, through the regularised incomplete beta function:
/// P(|T| > |t|) = I_x(df/2, 1/2) with x = df/(df + t²).
pub fn student_t_cdf(t: f64, df: f64) -> f64 {
    let x = df / (df + t * t);
    let tail = 0.5 * incomplete_beta(0.5 * df, 0.5, x);
    if t > 0.0 {
        1.0 - tail
    } else {
        tail
    }
}

/// The `q` quantile of Student's t with `df` degrees of freedom, by bisection on the distribution function.
pub fn student_t_quantile(q: f64, df: f64) -> f64 {
    let (mut lo, mut hi) = (-1.0, 1.0);
    while student_t_cdf(lo, df) > q {
        lo *= 2.0;
    }
    while student_t_cdf(hi, df) < q {
        hi *= 2.0;
    }
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if student_t_cdf(mid, df) < q {
            lo = mid;
        } else {
            hi = mid;
        }
        if hi - lo < 1e-13 * hi.abs().max(1.0) {
            break;
        }
    }
    0.5 * (lo + hi)
}

/// Regularised incomplete beta I_x(a, b) by its continued fraction (modified Lentz method), using the symmetry
/// I_x(a, b) = 1 − I_(1−x)(b, a) where the fraction converges slowly.
fn incomplete_beta(a: f64, b: f64, x: f64) -> f64 {
    if x <= 0.0 {
        return 0.0;
    }
    if x >= 1.0 {
        return 1.0;
    }
    let front = libm::exp(
        libm::lgamma(a + b) - libm::lgamma(a) - libm::lgamma(b)
            + a * libm::log(x)
            + b * libm::log(1.0 - x),
    );
    if x < (a + 1.0) / (a + b + 2.0) {
        front * beta_fraction(a, b, x) / a
    } else {
        1.0 - front * beta_fraction(b, a, 1.0 - x) / b
    }
}

fn beta_fraction(a: f64, b: f64, x: f64) -> f64 {
    const TINY: f64 = 1e-300;
    let mut c = 1.0;
    let mut d = 1.0 - (a + b) * x / (a + 1.0);
    if d.abs() < TINY {
        d = TINY;
    }
    d = 1.0 / d;
    let mut h = d;
    for m in 1..10_000 {
        let m = m as f64;
        let m2 = 2.0 * m;
        let even = m * (b - m) * x / ((a + m2 - 1.0) * (a + m2));
        let odd = -(a + m) * (a + b + m) * x / ((a + m2) * (a + m2 + 1.0));
        let mut step = 1.0;
        for aa in [even, odd] {
            d = 1.0 + aa * d;
            if d.abs() < TINY {
                d = TINY;
            }
            c = 1.0 + aa / c;
            if c.abs() < TINY {
                c = TINY;
            }
            d = 1.0 / d;
            step = d * c;
            h *= step;
        }
        if (step - 1.0).abs() < 1e-16 {
            break;
        }
    }
    h
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn t_distribution_matches_closed_forms() {
        // df = 1 is the Cauchy distribution: P(T ≤ t) = 1/2 + atan(t)/π (closed form).
        for t in [-3.0, -0.5, 0.0, 0.7, 2.0, 10.0] {
            let cauchy = 0.5 + libm::atan(t) / std::f64::consts::PI;
            assert!((student_t_cdf(t, 1.0) - cauchy).abs() < 1e-12, "t = {t}");
        }
        // df = 2: P(T ≤ t) = 1/2 + t / (2 √(2 + t²)) (closed form).
        for t in [-4.0f64, -1.0, 0.3, 1.5, 6.0] {
            let two = 0.5 + t / (2.0 * (2.0 + t * t).sqrt());
            assert!((student_t_cdf(t, 2.0) - two).abs() < 1e-12, "t = {t}");
        }
        // The quantile inverts the distribution function; 12.706 is the familiar 97.5 % point at df = 1 (tan(0.475π)).
        let q = student_t_quantile(0.975, 1.0);
        assert!(
            (q - libm::tan(0.475 * std::f64::consts::PI)).abs() < 1e-9,
            "{q}"
        );
    }

    #[test]
    fn gamma0_follows_the_formula_and_its_limits() {
        // p = α: γ₀ = 0 (the global null is just rejected, nothing more).
        assert_eq!(largest_gamma0(0.05, 10, 0.05), Some(0.0));
        assert_eq!(largest_gamma0(0.06, 10, 0.05), None);
        // The bound solves ((1 − γ₀) p^(1/N) + γ₀)^N = α.
        let (p, n, a) = (1e-6, 8, 0.05);
        let g = largest_gamma0(p, n, a).unwrap();
        let back = ((1.0 - g) * libm::pow(p, 1.0 / n as f64) + g).powi(n as i32);
        assert!((back - a).abs() < 1e-12, "{g} {back}");
    }

    #[test]
    fn group_null_averages_within_units_first() {
        // Two subjects: sessions 0 and 1 belong to the first, session 2 to the second. One window.
        let units = Units {
            members: vec![vec![0, 1], vec![2]],
        };
        let null = vec![
            vec![vec![0.2], vec![0.4]],
            vec![vec![0.6]],
            vec![vec![0.1], vec![0.3]],
        ];
        // Picks (1, 0, 0): unit means (0.4 + 0.6)/2 = 0.5 and 0.1; group 0.3; minimum 0.1.
        let picks = vec![vec![1, 0, 0]];
        let g = group_null(&units, &null, &picks);
        assert!((g[0][0] - 0.3).abs() < 1e-15);
        let scalar: Vec<Vec<f64>> = null
            .iter()
            .map(|s| s.iter().map(|v| v[0]).collect())
            .collect();
        assert_eq!(minimum_null(&units, &scalar, &picks), vec![0.1]);
    }
}
