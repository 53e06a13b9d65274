//! Standardisation fitted on the training fold only.
//!
//! The protocol never calls this directly: [`crate::decoders::FittedPipeline::fit`] fits it together with the
//! decoder and keeps it inside the fitted pipeline, so the test fold can only ever be transformed with training
//! statistics. Means and population SDs (divisor n) follow the usual convention of scikit-learn's StandardScaler
//! (scikit-learn 1.9 documentation); a feature that is constant in the training fold keeps scale 1, so it becomes 0
//! in training and stays finite in testing instead of turning into NaN.

/// Per-feature mean and scale learnt from a training fold.
#[derive(Debug, Clone)]
pub struct Standardiser {
    pub mean: Vec<f64>,
    pub scale: Vec<f64>,
}

impl Standardiser {
    /// Learn from row-major `x` (n × p).
    pub fn fit(x: &[f64], n: usize, p: usize) -> Standardiser {
        let mut mean = vec![0.0; p];
        for r in 0..n {
            for (m, v) in mean.iter_mut().zip(&x[r * p..(r + 1) * p]) {
                *m += v;
            }
        }
        for m in &mut mean {
            *m /= n as f64;
        }
        let mut var = vec![0.0; p];
        for r in 0..n {
            for ((s, v), m) in var.iter_mut().zip(&x[r * p..(r + 1) * p]).zip(&mean) {
                *s += (v - m) * (v - m);
            }
        }
        let scale = var
            .iter()
            .zip(&mean)
            .map(|(s, m)| Standardiser::scale_of((s / n as f64).sqrt(), *m))
            .collect();
        Standardiser { mean, scale }
    }

    /// The scale of a feature with this SD and mean: the SD, or 1 for a constant feature. Round-off noise around
    /// a constant counts as constant (relative to the feature's size).
    pub fn scale_of(sd: f64, mean: f64) -> f64 {
        if sd <= 1e-12 * mean.abs().max(1.0) {
            1.0
        } else {
            sd
        }
    }

    /// Transform row-major `x` in place.
    pub fn apply(&self, x: &mut [f64]) {
        let p = self.mean.len();
        for row in x.chunks_exact_mut(p) {
            for ((v, m), s) in row.iter_mut().zip(&self.mean).zip(&self.scale) {
                *v = (*v - m) / s;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn uses_training_statistics_and_survives_constants() {
        // Column 0: values 1, 3 → mean 2, population SD 1. Column 1: constant 5.
        let train = [1.0, 5.0, 3.0, 5.0];
        let s = Standardiser::fit(&train, 2, 2);
        assert_eq!(s.mean, vec![2.0, 5.0]);
        assert_eq!(s.scale, vec![1.0, 1.0]);
        let mut test = [4.0, 7.0];
        s.apply(&mut test);
        assert_eq!(test, [2.0, 2.0]);
    }
}
