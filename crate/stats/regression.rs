//! Scores of a continuous decoder's cross-validated predictions.

/// Out-of-sample R²: `1 − Σ(y − ŷ)² / Σ(y − ȳ_train)²`, each test trial's reference being the mean of the
/// training fold that predicted it. Measured against the training mean, not the test trials' own mean, because a
/// decoder that only knows the training fold can at best predict that mean: R² is 0 for a decoder that learnt
/// nothing, negative for one worse than that, and never the squared correlation (which rewards a prediction that is
/// correlated but wrongly scaled or offset).
pub fn r2_against(actual: &[f64], predicted: &[f64], reference: &[f64]) -> f64 {
    let (mut sse, mut sst) = (0.0, 0.0);
    for ((a, p), r) in actual.iter().zip(predicted).zip(reference) {
        sse += (a - p) * (a - p);
        sst += (a - r) * (a - r);
    }
    1.0 - sse / sst
}

/// Pearson correlation of two equally long series; 0 when either is constant (no linear relation can be shown).
pub fn pearson(a: &[f64], b: &[f64]) -> f64 {
    let n = a.len() as f64;
    let (ma, mb) = (a.iter().sum::<f64>() / n, b.iter().sum::<f64>() / n);
    let (mut sab, mut saa, mut sbb) = (0.0, 0.0, 0.0);
    for (x, y) in a.iter().zip(b) {
        sab += (x - ma) * (y - mb);
        saa += (x - ma) * (x - ma);
        sbb += (y - mb) * (y - mb);
    }
    if saa == 0.0 || sbb == 0.0 {
        return 0.0;
    }
    sab / (saa * sbb).sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn r2_against_the_training_mean_by_hand() {
        // y = [1, 2, 3], ŷ = [1, 2, 4], training mean 0: SSE = 1, SST = 1 + 4 + 9 = 14, R² = 13/14.
        let r2 = r2_against(&[1.0, 2.0, 3.0], &[1.0, 2.0, 4.0], &[0.0; 3]);
        assert!((r2 - 13.0 / 14.0).abs() < 1e-15);
        // Predicting the training mean gives exactly 0; predicting worse gives a negative value.
        assert_eq!(r2_against(&[1.0, 3.0], &[5.0, 5.0], &[5.0, 5.0]), 0.0);
        assert!(r2_against(&[1.0, 3.0], &[9.0, -5.0], &[2.0, 2.0]) < 0.0);
    }

    #[test]
    fn pearson_by_hand() {
        // [1, 2, 3] against [2, 4, 7]: deviations (−1, 0, 1) and (−7/3, −1/3, 8/3): r = 5 / sqrt(2 · 114/9).
        let r = pearson(&[1.0, 2.0, 3.0], &[2.0, 4.0, 7.0]);
        assert!((r - 5.0 / (2.0f64 * 114.0 / 9.0).sqrt()).abs() < 1e-14);
        assert_eq!(pearson(&[1.0, 1.0], &[2.0, 3.0]), 0.0);
    }
}
