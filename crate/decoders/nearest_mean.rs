//! Nearest class mean by correlation: assign each trial to the class whose mean pattern (over the training trials,
//! on standardised features) correlates best with the trial's pattern across neurons.
//!
//! Parameter-free and robust with few trials per class, where a covariance cannot be estimated. The correlation is
//! Pearson's r between the two p-vectors; a pattern with no spread (all neurons equal) correlates 0 with everything.
//!
//! Its limitation: a correlation across neurons ignores anything shared by all of them. A condition that raises
//! or lowers the whole population together (a shared gain or offset) moves every neuron the same way, which the
//! correlation removes with the mean across neurons, so this decoder cannot see it where LDA or an SVM would.
//!
//! Below [`MIN_CORRELATION_FEATURES`] features a correlation says nothing: across one feature it is undefined, and
//! across two it is always ±1 (two centred values are a and −a). With one or two features the decoder therefore
//! assigns each trial to the class whose mean is nearest in Euclidean distance on the standardised features (the
//! nearest-centroid rule), and every report says so ([`fewer_features_note`]).

use super::linalg::{dot, dot_centred};
use super::standardise::Standardiser;
use super::{argmax, present_classes, two_class_margin, Decoder, FoldSet, Model};

pub struct NearestMean;

/// Fewest features across which a correlation can rank classes; below it the decoder uses Euclidean distance.
pub const MIN_CORRELATION_FEATURES: usize = 3;

/// What every report of this decoder on `p` < [`MIN_CORRELATION_FEATURES`] features says; `None` otherwise.
pub fn fewer_features_note(p: usize) -> Option<String> {
    (p < MIN_CORRELATION_FEATURES).then(|| {
        format!(
            "nearest-mean correlates trial and class patterns across features, which needs at least {} features \
             (across {} the correlation is {}); each trial was assigned to the class whose mean is nearest in \
             Euclidean distance on the standardised features instead",
            MIN_CORRELATION_FEATURES,
            if p == 1 { "one".to_string() } else { format!("{p}") },
            if p == 1 { "undefined" } else { "always +1 or −1" }
        )
    })
}

/// Scoring a trial: its correlation with class c's pattern m_c is `(z − z̄)·m_c / ‖z − z̄‖`. The patterns are
/// centred (Σ m_c = 0), so `(z − z̄)·m_c = z·m_c`, and the division is the same for every class, so the class with
/// the largest `z·m_c` is the best correlated: no per-trial centring or copy is needed. A trial with no spread
/// across neurons scores 0 (to rounding) for every class.
struct MeanModel {
    classes: Vec<usize>,
    /// Per class: the mean pattern, centred across neurons and scaled to unit length (zero if it has no spread);
    /// with fewer than [`MIN_CORRELATION_FEATURES`] features, the mean pattern itself.
    patterns: Vec<Vec<f64>>,
    /// Nearest-centroid scoring (fewer than [`MIN_CORRELATION_FEATURES`] features): per class `−‖m_c‖²/2`, so that
    /// the largest `z·m_c − ‖m_c‖²/2` is the smallest distance `‖z − m_c‖`. Empty for correlation scoring.
    offsets: Vec<f64>,
    /// Fitted from a split's sums on raw rows (see [`NearestMean::fit_folds_raw`]): the training fold's means and
    /// each class's weights `m_c / scale`, so that `(x − mean)·weights = z·m_c` scores raw rows directly; `None`
    /// when the pipeline standardised the rows.
    raw: Option<RawScoring>,
}

struct RawScoring {
    mean: Vec<f64>,
    weights: Vec<Vec<f64>>,
}

/// Centre a pattern across its entries and scale it to unit length; all zeros when it has no spread.
fn unit_centred(v: &[f64]) -> Vec<f64> {
    let m = v.iter().sum::<f64>() / v.len() as f64;
    let c: Vec<f64> = v.iter().map(|x| x - m).collect();
    let norm = dot(&c, &c).sqrt();
    if norm > 0.0 {
        c.iter().map(|x| x / norm).collect()
    } else {
        vec![0.0; v.len()]
    }
}

impl Decoder for NearestMean {
    fn fit(&self, x: &[f64], n: usize, p: usize, y: &[usize], n_classes: usize) -> Box<dyn Model> {
        let classes = present_classes(y, n_classes);
        let distance = p < MIN_CORRELATION_FEATURES;
        let patterns: Vec<Vec<f64>> = classes
            .iter()
            .map(|&k| {
                let mut mean = vec![0.0; p];
                let mut count = 0;
                for i in (0..n).filter(|&i| y[i] == k) {
                    for (m, v) in mean.iter_mut().zip(&x[i * p..(i + 1) * p]) {
                        *m += v;
                    }
                    count += 1;
                }
                mean.iter_mut().for_each(|m| *m /= count as f64);
                if distance {
                    mean
                } else {
                    unit_centred(&mean)
                }
            })
            .collect();
        let offsets = if distance {
            patterns.iter().map(|m| -0.5 * dot(m, m)).collect()
        } else {
            Vec::new()
        };
        Box::new(MeanModel {
            classes,
            patterns,
            offsets,
            raw: None,
        })
    }

    /// Every fold of a split from one pass over its rows: per (fold, class) the count and the sum of the rows, per
    /// fold the sum of squares, all of rows shifted by the first row so that the sums keep their digits. A
    /// training fold's standardisation and class means are then totals minus the fold's share: the same numbers as
    /// standardising a copy of the training rows and averaging them (to rounding; a test compares the two), without
    /// the copy, which is most of the cost of this decoder.
    fn fit_folds_raw(&self, set: &FoldSet, wanted: &[bool]) -> Option<Vec<Option<Box<dyn Model>>>> {
        // With one or two features the distance rule is fitted by the pipeline; its cost is negligible there.
        if set.y.is_empty() || set.p < MIN_CORRELATION_FEATURES {
            return None;
        }
        Some(
            fold_models(set, wanted)
                .into_iter()
                .map(|m| m.map(|m| Box::new(m) as Box<dyn Model>))
                .collect(),
        )
    }
}

/// The model of every wanted fold of a split, from the split's sums (see [`NearestMean::fit_folds_raw`]).
fn fold_models(set: &FoldSet, wanted: &[bool]) -> Vec<Option<MeanModel>> {
    let (p, k) = (set.p, set.n_classes);
    // Any value typical of each feature conditions the sums; the first trial's saves a pass over the rows.
    let offset = set.x[..p].to_vec();
    // [fold][class] counts and sums; [fold] sums of squares.
    let mut count = vec![vec![0usize; k]; set.folds];
    let mut sum = vec![vec![vec![0.0; p]; k]; set.folds];
    let mut square = vec![vec![0.0; p]; set.folds];
    for (i, row) in set.x.chunks_exact(p).enumerate() {
        let (f, c) = (set.fold[i], set.y[i]);
        count[f][c] += 1;
        for (((s, q), v), o) in sum[f][c]
            .iter_mut()
            .zip(&mut square[f])
            .zip(row)
            .zip(&offset)
        {
            let z = v - o;
            *s += z;
            *q += z * z;
        }
    }
    let count_total: Vec<usize> = (0..k).map(|c| count.iter().map(|f| f[c]).sum()).collect();
    let sum_total: Vec<Vec<f64>> = (0..k)
        .map(|c| {
            let mut t = vec![0.0; p];
            for share in &sum {
                t.iter_mut().zip(&share[c]).for_each(|(t, v)| *t += v);
            }
            t
        })
        .collect();
    let mut square_total = vec![0.0; p];
    for share in &square {
        square_total
            .iter_mut()
            .zip(share)
            .for_each(|(t, v)| *t += v);
    }
    (0..set.folds)
        .map(|f| {
            if !wanted[f] {
                return None;
            }
            // A training fold is the split's totals less the fold's own share.
            let n_c: Vec<usize> = (0..k).map(|c| count_total[c] - count[f][c]).collect();
            let n_train: usize = n_c.iter().sum();
            let class_sum: Vec<Vec<f64>> = (0..k)
                .map(|c| {
                    sum_total[c]
                        .iter()
                        .zip(&sum[f][c])
                        .map(|(t, v)| t - v)
                        .collect()
                })
                .collect();
            let mut shifted_mean = vec![0.0; p];
            let sq: Vec<f64> = square_total
                .iter()
                .zip(&square[f])
                .map(|(t, v)| t - v)
                .collect();
            for t in &class_sum {
                shifted_mean.iter_mut().zip(t).for_each(|(m, v)| *m += v);
            }
            shifted_mean.iter_mut().for_each(|m| *m /= n_train as f64);
            let mean: Vec<f64> = shifted_mean
                .iter()
                .zip(&offset)
                .map(|(m, o)| m + o)
                .collect();
            let scale: Vec<f64> = (0..p)
                .map(|j| {
                    let var = (sq[j] / n_train as f64 - shifted_mean[j] * shifted_mean[j]).max(0.0);
                    Standardiser::scale_of(var.sqrt(), mean[j])
                })
                .collect();
            let classes: Vec<usize> = (0..k).filter(|&c| n_c[c] > 0).collect();
            let patterns: Vec<Vec<f64>> = classes
                .iter()
                .map(|&c| {
                    let z: Vec<f64> = (0..p)
                        .map(|j| (class_sum[c][j] / n_c[c] as f64 - shifted_mean[j]) / scale[j])
                        .collect();
                    unit_centred(&z)
                })
                .collect();
            Some(MeanModel {
                classes,
                offsets: Vec::new(),
                raw: Some(RawScoring {
                    weights: patterns
                        .iter()
                        .map(|m| m.iter().zip(&scale).map(|(v, s)| v / s).collect())
                        .collect(),
                    mean,
                }),
                patterns,
            })
        })
        .collect()
}

impl MeanModel {
    /// Each class's score for one row (the largest wins), written into `scores`.
    fn score(&self, row: &[f64], scores: &mut [f64]) {
        match &self.raw {
            Some(raw) => {
                for (s, w) in scores.iter_mut().zip(&raw.weights) {
                    *s = dot_centred(row, &raw.mean, w);
                }
            }
            None => {
                for (s, m) in scores.iter_mut().zip(&self.patterns) {
                    *s = dot(row, m);
                }
                for (s, o) in scores.iter_mut().zip(&self.offsets) {
                    *s += o;
                }
            }
        }
    }
}

impl Model for MeanModel {
    fn predict(&self, x: &[f64]) -> Vec<usize> {
        let p = self.patterns[0].len();
        let mut scores = vec![0.0; self.patterns.len()];
        x.chunks_exact(p)
            .map(|row| {
                self.score(row, &mut scores);
                self.classes[argmax(&scores)]
            })
            .collect()
    }

    /// The second class's score less the first's: a difference of correlations, or of halved squared distances.
    fn decision(&self, x: &[f64]) -> Vec<f64> {
        let p = self.patterns[0].len();
        let mut scores = vec![0.0; self.patterns.len()];
        x.chunks_exact(p)
            .map(|row| {
                self.score(row, &mut scores);
                two_class_margin(&scores)
            })
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn picks_the_best_correlated_mean_not_the_nearest() {
        // Class 0's mean pattern rises across neurons, class 1's falls. A trial far from both means in distance but
        // rising (10, 20, 30) correlates +1 with class 0.
        let x = [0.0, 1.0, 2.0, 0.2, 1.1, 2.1, 2.0, 1.0, 0.0, 2.1, 0.9, 0.1];
        let y = [0, 0, 1, 1];
        let m = NearestMean.fit(&x, 4, 3, &y, 2);
        assert_eq!(m.predict(&[10.0, 20.0, 30.0, 3.0, 2.0, 1.0]), vec![0, 1]);
    }

    #[test]
    fn folds_from_sums_equal_fits_on_standardised_copies() {
        use crate::decoders::FittedPipeline;
        // Invented rows with a large mean (firing rates near 80 Hz) and a constant neuron, four folds, three classes.
        let (n, p, k, folds) = (40, 6, 3, 4);
        let x: Vec<f64> = (0..n * p)
            .map(|i| match i % p {
                5 => 7.0,
                j => 80.0 + ((i * 7919 % 113) as f64) / 9.0 + (j * (i / p % k)) as f64,
            })
            .collect();
        let y: Vec<usize> = (0..n).map(|i| i % k).collect();
        let fold: Vec<usize> = (0..n).map(|i| (i / k) % folds).collect();
        let set = FoldSet {
            x: &x,
            p,
            y: &y,
            fold: &fold,
            folds,
            n_classes: k,
        };
        let fast = fold_models(&set, &[true; 4]);
        for (f, model) in fast.iter().enumerate() {
            let (train, test) = set.partition(f);
            let y_train: Vec<usize> = train.iter().map(|&i| y[i]).collect();
            let direct = FittedPipeline::fit(&NearestMean, &set.rows(&train), p, &y_train, k);
            let rows = set.rows(&test);
            assert_eq!(
                model.as_ref().unwrap().predict(&rows),
                direct.predict(rows.clone()),
                "fold {f}"
            );
            // The patterns themselves agree to rounding.
            let scaled = Standardiser::fit(&set.rows(&train), train.len(), p);
            for c in 0..k {
                let mut z: Vec<f64> = train
                    .iter()
                    .filter(|&&i| y[i] == c)
                    .flat_map(|&i| x[i * p..(i + 1) * p].to_vec())
                    .collect();
                scaled.apply(&mut z);
                let rows_c = z.len() / p;
                let mean: Vec<f64> = (0..p)
                    .map(|j| (0..rows_c).map(|r| z[r * p + j]).sum::<f64>() / rows_c as f64)
                    .collect();
                let want = unit_centred(&mean);
                let patterns = &model.as_ref().unwrap().patterns;
                assert!(
                    patterns[c]
                        .iter()
                        .zip(&want)
                        .all(|(a, b)| (a - b).abs() < 1e-12),
                    "fold {f} class {c}: {:?} vs {want:?}",
                    patterns[c]
                );
            }
        }
    }

    #[test]
    fn flat_patterns_do_not_produce_nan() {
        let m = NearestMean.fit(&[1.0, 1.0, 1.0, 2.0, 0.0, 1.0], 2, 3, &[0, 1], 2);
        assert_eq!(m.predict(&[5.0, 5.0, 5.0]).len(), 1);
        assert!(unit_centred(&[3.0, 3.0]).iter().all(|v| *v == 0.0));
    }

    #[test]
    fn one_or_two_features_use_the_nearest_mean_by_distance() {
        // One feature: class means −1 and 2, so the boundary is their midpoint 0.5 (a correlation across one
        // feature would be undefined and score every class alike).
        let m = NearestMean.fit(&[-1.5, -0.5, 1.0, 3.0], 4, 1, &[0, 0, 1, 1], 2);
        assert_eq!(m.predict(&[0.4, 0.6, -9.0, 9.0]), vec![0, 1, 0, 1]);
        // Two features: means (0, 0) and (2, 2), both flat across features, so a correlation would score every
        // trial 0 for both. Squared distances: (1.1, 1.1) 2.42 vs 1.62, (0.2, 1.9) 3.65 vs 3.25, (0.9, 0.9) 1.62
        // vs 2.42.
        let x = [0.0, 0.0, 0.0, 0.0, 2.0, 2.0, 2.0, 2.0];
        let m = NearestMean.fit(&x, 4, 2, &[0, 0, 1, 1], 2);
        assert_eq!(m.predict(&[1.1, 1.1, 0.2, 1.9, 0.9, 0.9]), vec![1, 1, 0]);
        assert!(fewer_features_note(1).unwrap().contains("undefined"));
        assert!(fewer_features_note(2).unwrap().contains("+1 or −1"));
        assert!(fewer_features_note(3).is_none());
    }
}
