//! Random streams that do not depend on who runs a task, or when.
//!
//! Every task (repeat `i`, shuffle `j`, repeat `i` inside shuffle `j`, ...) builds its own ChaCha20 generator from
//! the recipe's seed and the task's coordinates. A face may therefore run any subset of tasks, in any order, on any
//! number of threads or workers, and each task still sees the same numbers. ChaCha20 is specified bit for bit, so
//! x86_64 and wasm32 agree. The helpers below draw integers and shuffles by our own fixed algorithms rather than a
//! library's, so that a dependency update cannot silently change published numbers.

use rand_chacha::ChaCha20Rng;
use rand_core::{RngCore, SeedableRng};

/// What a stream is used for; part of the stream's identity so different uses never share numbers.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[repr(u64)]
pub enum Stream {
    /// Balancing and fold assignment of an observed repeat.
    Repeat = 1,
    /// The label permutation of one shuffle.
    Permutation = 2,
    /// Balancing and fold assignment of a repeat inside one shuffle.
    ShuffleRepeat = 3,
    /// Invented data for demos, tests and benchmarks.
    Simulation = 4,
    /// Random subsets of neurons (the neuron-dropping curve).
    Subset = 5,
    /// Inner folds of nested tuning, per outer training fold.
    InnerFolds = 6,
    /// The balanced draw of trials a neuron analysis fits its weights on.
    Weights = 7,
    /// A repeat inside one shuffle of the temporal generalization matrix whose null permutes only the training
    /// labels: the split of the observed labels (and, with pseudo-trials, each training fold's permutation).
    TrainingShuffle = 8,
    /// The seed of each session of a study, from the study's seed and the session's name.
    Session = 9,
    /// The second-level draws of a study's group tests (one null value per session, many times).
    GroupNull = 10,
    /// Which real trials a power-analysis subsample keeps.
    PowerTrials = 11,
    /// Which recorded neurons the power analysis copies as noise neurons, and how it permutes their trials.
    NoiseNeurons = 12,
    /// The seed of one power-analysis subsample's own protocol (its repeats and shuffles).
    PowerProtocol = 13,
    /// The training labels of one shuffle of the temporal generalization matrix's training-label null: one
    /// permutation of the observed labels, shared by the shuffle's repeats.
    TrainingLabels = 14,
}

/// A generator for task `(a, b)` of kind `kind` under `seed`.
pub fn task_rng(seed: u64, kind: Stream, a: u64, b: u64) -> ChaCha20Rng {
    let mut key = [0u8; 32];
    key[0..8].copy_from_slice(&seed.to_le_bytes());
    key[8..16].copy_from_slice(&(kind as u64).to_le_bytes());
    key[16..24].copy_from_slice(&a.to_le_bytes());
    key[24..32].copy_from_slice(&b.to_le_bytes());
    ChaCha20Rng::from_seed(key)
}

/// Uniform integer in `0..n` without modulo bias (rejection on the top of the 64-bit range).
pub fn below(rng: &mut impl RngCore, n: usize) -> usize {
    assert!(n > 0, "below(0) has no value");
    let n = n as u64;
    let zone = u64::MAX - (u64::MAX % n);
    loop {
        let v = rng.next_u64();
        if v < zone {
            return (v % n) as usize;
        }
    }
}

/// Fisher–Yates shuffle in place (Durstenfeld's version, from the last element down).
pub fn shuffle<T>(rng: &mut impl RngCore, items: &mut [T]) {
    for i in (1..items.len()).rev() {
        let j = below(rng, i + 1);
        items.swap(i, j);
    }
}

/// Uniform double in [0, 1) from the top 53 bits.
pub fn unit(rng: &mut impl RngCore) -> f64 {
    (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

/// Standard normal draw by the Box–Muller transform (libm keeps it bit-identical across platforms).
pub fn normal(rng: &mut impl RngCore) -> f64 {
    let u1 = 1.0 - unit(rng); // (0, 1]
    let u2 = unit(rng);
    libm::sqrt(-2.0 * libm::log(u1)) * libm::cos(2.0 * std::f64::consts::PI * u2)
}

/// Poisson draw by sequential inversion; fine for the modest means of simulated spike counts.
pub fn poisson(rng: &mut impl RngCore, mean: f64) -> u32 {
    if mean <= 0.0 {
        return 0;
    }
    let u = unit(rng);
    let mut k = 0u32;
    let mut p = libm::exp(-mean);
    let mut cdf = p;
    while u >= cdf && k < 100_000 {
        k += 1;
        p *= mean / k as f64;
        cdf += p;
        if p == 0.0 && cdf < u {
            // Underflow for very large means: fall back to a rounded normal approximation.
            return (mean + libm::sqrt(mean) * normal(rng)).round().max(0.0) as u32;
        }
    }
    k
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn streams_differ_by_every_coordinate() {
        let base = task_rng(7, Stream::Repeat, 0, 0).next_u64();
        assert_ne!(base, task_rng(8, Stream::Repeat, 0, 0).next_u64());
        assert_ne!(base, task_rng(7, Stream::Permutation, 0, 0).next_u64());
        assert_ne!(base, task_rng(7, Stream::Repeat, 1, 0).next_u64());
        assert_ne!(base, task_rng(7, Stream::Repeat, 0, 1).next_u64());
        assert_eq!(base, task_rng(7, Stream::Repeat, 0, 0).next_u64());
    }

    #[test]
    fn below_is_roughly_uniform() {
        let mut rng = task_rng(1, Stream::Simulation, 0, 0);
        let mut counts = [0usize; 5];
        for _ in 0..50_000 {
            counts[below(&mut rng, 5)] += 1;
        }
        // Expected 10 000 each; SD ~ 89, so 500 is more than 5 SD.
        for c in counts {
            assert!((c as i64 - 10_000).abs() < 500, "{counts:?}");
        }
    }

    #[test]
    fn poisson_mean_and_variance_match() {
        let mut rng = task_rng(2, Stream::Simulation, 0, 0);
        let n = 40_000;
        let draws: Vec<f64> = (0..n).map(|_| poisson(&mut rng, 4.0) as f64).collect();
        let mean = draws.iter().sum::<f64>() / n as f64;
        let var = draws.iter().map(|d| (d - mean).powi(2)).sum::<f64>() / (n - 1) as f64;
        // Poisson(4): mean = variance = 4; standard error of the mean is 0.01.
        assert!((mean - 4.0).abs() < 0.05, "{mean}");
        assert!((var - 4.0).abs() < 0.2, "{var}");
    }
}
