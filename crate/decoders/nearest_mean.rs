//! Nearest class mean by correlation: assign each trial to the class whose mean pattern (over the training trials,
//! on standardised features) correlates best with the trial's pattern across neurons.
//!
//! Parameter-free and robust with few trials per class, where a covariance cannot be estimated. The correlation is
//! Pearson's r between the two p-vectors; a pattern with no spread (all neurons equal) correlates 0 with everything.

use super::linalg::dot;
use super::{argmax, present_classes, Decoder, Model};

pub struct NearestMean;

struct MeanModel {
    classes: Vec<usize>,
    /// Per class: the mean pattern, centred across neurons and scaled to unit length (zero if it has no spread).
    patterns: Vec<Vec<f64>>,
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
        let patterns = classes
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
                unit_centred(&mean)
            })
            .collect();
        Box::new(MeanModel { classes, patterns })
    }
}

impl Model for MeanModel {
    fn predict(&self, x: &[f64]) -> Vec<usize> {
        let p = self.patterns[0].len();
        x.chunks_exact(p)
            .map(|row| {
                let r = unit_centred(row);
                let scores: Vec<f64> = self.patterns.iter().map(|m| dot(&r, m)).collect();
                self.classes[argmax(&scores)]
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
    fn flat_patterns_do_not_produce_nan() {
        let m = NearestMean.fit(&[1.0, 1.0, 2.0, 0.0], 2, 2, &[0, 1], 2);
        assert_eq!(m.predict(&[5.0, 5.0]).len(), 1);
        assert!(unit_centred(&[3.0, 3.0]).iter().all(|v| *v == 0.0));
    }
}
