//! Standardisation fitted on the training fold only.
//!
//! The protocol never calls this directly: [`crate::decoders::FittedPipeline::fit`] fits it together with the
//! decoder and keeps it inside the fitted pipeline, so the test fold can only ever be transformed with training
//! statistics. Means and population SDs (divisor n) follow the usual convention of scikit-learn's StandardScaler
//! (scikit-learn 1.9 documentation); a feature that is constant in the training fold keeps scale 1, so it becomes 0
//! in training and stays finite in testing instead of turning into NaN.

/// Per-feature mean and scale learnt from a training fold.
///
/// **Any finite magnitude.** Each feature is computed on its values times a power of two (`unit`) that brings its
/// largest training magnitude near 1: squares of values near 1e200 would overflow and squares of values near
/// 1e-200 would vanish, either way losing the feature without a word. Multiplying by a power of two is exact, and
/// every step (sum, difference, square, square root, quotient) commutes exactly with it, so wherever the unscaled
/// arithmetic neither overflows nor underflows the results are the same to the last bit.
#[derive(Debug, Clone)]
pub struct Standardiser {
    pub mean: Vec<f64>,
    pub scale: Vec<f64>,
    /// Per feature, the power of two its values are multiplied by before any arithmetic.
    unit: Vec<f64>,
}

/// The power of two that brings `largest` (a magnitude) into [0.5, 1), or 1 for zero and non-finite values. The
/// exponent is kept within ±1020 so that the power is a normal double: the largest doubles then scale to at most
/// 16 and the smallest subnormals to at least 2^-54, both far from overflow and underflow.
fn unit_for(largest: f64) -> f64 {
    if !(largest.is_finite() && largest > 0.0) {
        return 1.0;
    }
    // largest in [2^(e-1), 2^e), from the bits (a subnormal counted from its leading bit).
    let bits = largest.to_bits();
    let biased = ((bits >> 52) & 0x7ff) as i64;
    let e = if biased == 0 {
        -1022 - ((bits & ((1u64 << 52) - 1)).leading_zeros() as i64 - 12)
    } else {
        biased - 1022
    };
    f64::from_bits(((1023 - e.clamp(-1020, 1020)) as u64) << 52)
}

impl Standardiser {
    /// Learn from row-major `x` (n × p).
    pub fn fit(x: &[f64], n: usize, p: usize) -> Standardiser {
        let mut largest = vec![0.0f64; p];
        for r in 0..n {
            for (l, v) in largest.iter_mut().zip(&x[r * p..(r + 1) * p]) {
                *l = l.max(v.abs());
            }
        }
        let unit: Vec<f64> = largest.into_iter().map(unit_for).collect();
        let mut mean = vec![0.0; p];
        for r in 0..n {
            for ((m, v), u) in mean.iter_mut().zip(&x[r * p..(r + 1) * p]).zip(&unit) {
                *m += v * u;
            }
        }
        for m in &mut mean {
            *m /= n as f64;
        }
        let mut var = vec![0.0; p];
        for r in 0..n {
            for (((s, v), m), u) in var
                .iter_mut()
                .zip(&x[r * p..(r + 1) * p])
                .zip(&mean)
                .zip(&unit)
            {
                *s += (v * u - m) * (v * u - m);
            }
        }
        // The constant test is relative, so it gives the same verdict in the unit as outside it.
        let scale = var
            .iter()
            .zip(&mean)
            .zip(&unit)
            .map(|((s, m), u)| {
                let sd = (s / n as f64).sqrt();
                if Standardiser::is_constant(sd, *m) {
                    1.0
                } else {
                    sd / u
                }
            })
            .collect();
        let mean = mean.iter().zip(&unit).map(|(m, u)| m / u).collect();
        Standardiser { mean, scale, unit }
    }

    /// The scale of a feature with this SD and mean: the SD, or 1 for a constant feature. Round-off noise around
    /// a constant counts as constant, relative to the feature's size only, as scikit-learn 1.9.1's StandardScaler
    /// judges it (`_is_constant_feature`): a feature measured in small units (1e-13 A) is not a constant.
    pub fn scale_of(sd: f64, mean: f64) -> f64 {
        if Standardiser::is_constant(sd, mean) {
            1.0
        } else {
            sd
        }
    }

    fn is_constant(sd: f64, mean: f64) -> bool {
        sd <= 1e-12 * mean.abs()
    }

    /// Transform row-major `x` in place.
    pub fn apply(&self, x: &mut [f64]) {
        let p = self.mean.len();
        // Mean and scale in each feature's unit, so that a difference of two values near ±1e308 cannot overflow.
        let mean: Vec<f64> = self
            .mean
            .iter()
            .zip(&self.unit)
            .map(|(m, u)| m * u)
            .collect();
        let scale: Vec<f64> = self
            .scale
            .iter()
            .zip(&self.unit)
            .map(|(s, u)| s * u)
            .collect();
        for row in x.chunks_exact_mut(p) {
            for (((v, m), s), u) in row.iter_mut().zip(&mean).zip(&scale).zip(&self.unit) {
                *v = (*v * u - m) / s;
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

    #[test]
    fn units_are_the_powers_of_two_below_the_largest_magnitude() {
        assert_eq!(unit_for(1.0), 0.5);
        assert_eq!(unit_for(0.75), 1.0);
        assert_eq!(unit_for(3.0), 0.25);
        assert_eq!(unit_for(0.0), 1.0);
        assert_eq!(unit_for(f64::NAN), 1.0);
        for v in [1e300, f64::MIN_POSITIVE * 4.0, 1e200, 1e-200] {
            let scaled = v * unit_for(v);
            assert!((0.5..1.0).contains(&scaled), "{v:e} -> {scaled}");
        }
        // The extremes, where the power of two would not be a normal double, stay well inside the range.
        for v in [f64::MAX, f64::MIN_POSITIVE, 5e-324, 1e-310] {
            let scaled = v * unit_for(v);
            assert!(
                (2f64.powi(-54)..=16.0).contains(&scaled),
                "{v:e} -> {scaled}"
            );
        }
    }

    #[test]
    fn any_magnitude_standardises_like_values_near_one() {
        // Column 0 is column 1 times 2^k, exactly: both must give the same z-scores to the last bit, from values
        // whose squares overflow (2^700 ≈ 5e210, 2^1000) or vanish (2^-700 ≈ 2e-211, 2^-1000).
        let base = [0.3, -1.7, 2.2, 0.9, -0.4];
        for k in [700, -700, 1000, -1000] {
            let f = f64::powi(2.0, k);
            let train: Vec<f64> = base.iter().flat_map(|&b| [b * f, b]).collect();
            let s = Standardiser::fit(&train, base.len(), 2);
            let mut z = train.clone();
            s.apply(&mut z);
            for row in z.chunks(2) {
                assert!(row[0].is_finite() && row[0] == row[1], "2^{k}: {row:?}");
            }
        }
        // Values near the largest double: differences of ±1e308 would overflow without the unit.
        let train = [1e308, -1e308, 1.5e308, -1.2e308];
        let s = Standardiser::fit(&train, 4, 1);
        let mut z = train;
        s.apply(&mut z);
        assert!(z.iter().all(|v| v.is_finite() && v.abs() < 2.0), "{z:?}");
        assert!(z[0] > 0.0 && z[1] < 0.0);
        // Subnormal values (below 2.2e-308) still separate.
        let train = [3e-320, -2e-320, 1e-320, -4e-320];
        let s = Standardiser::fit(&train, 4, 1);
        let mut z = train;
        s.apply(&mut z);
        assert!(z.iter().all(|v| v.is_finite()), "{z:?}");
        assert!(z[0] > z[2] && z[2] > z[1] && z[1] > z[3], "{z:?}");
    }

    #[test]
    fn a_feature_in_small_units_is_not_a_constant() {
        // SD 1e-13 around a mean of 2e-13: real variation, as scikit-learn's relative test judges it.
        let train = [1e-13, 3e-13];
        let s = Standardiser::fit(&train, 2, 1);
        assert!((s.scale[0] - 1e-13).abs() < 1e-28, "{:?}", s.scale);
        // A true constant (mean rounded from the sum) keeps scale 1.
        let s = Standardiser::fit(&[0.1, 0.1, 0.1], 3, 1);
        assert_eq!(s.scale, vec![1.0]);
    }
}
