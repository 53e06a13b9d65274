//! Circular statistics for decoded angles (radians throughout; units are converted at the edges).

use std::f64::consts::PI;

/// Mean direction `atan2(Σ sin, Σ cos)`.
pub fn mean_direction(angles: &[f64]) -> f64 {
    let (mut s, mut c) = (0.0, 0.0);
    for &a in angles {
        s += libm::sin(a);
        c += libm::cos(a);
    }
    libm::atan2(s, c)
}

/// The shorter way round the circle between two angles, in [0, π].
pub fn distance(a: f64, b: f64) -> f64 {
    let d = (a - b).rem_euclid(2.0 * PI);
    d.min(2.0 * PI - d)
}

/// Mean absolute angular error: the mean of [`distance`] between actual and predicted angles.
pub fn mean_absolute_error(actual: &[f64], predicted: &[f64]) -> f64 {
    let total: f64 = actual
        .iter()
        .zip(predicted)
        .map(|(&a, &p)| distance(a, p))
        .sum();
    total / actual.len() as f64
}

/// The circular correlation coefficient of Jammalamadaka & SenGupta (2001, eq. 8.2.2):
/// `Σ sin(α − ᾱ) sin(β − β̄) / √(Σ sin²(α − ᾱ) Σ sin²(β − β̄))`, with ᾱ, β̄ the mean directions; 0 when either set
/// of angles has no spread about its mean direction.
pub fn correlation(a: &[f64], b: &[f64]) -> f64 {
    let (ma, mb) = (mean_direction(a), mean_direction(b));
    let (mut sab, mut saa, mut sbb) = (0.0, 0.0, 0.0);
    for (&x, &y) in a.iter().zip(b) {
        let (sx, sy) = (libm::sin(x - ma), libm::sin(y - mb));
        sab += sx * sy;
        saa += sx * sx;
        sbb += sy * sy;
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
    fn distances_wrap_around() {
        let deg = PI / 180.0;
        assert!((distance(350.0 * deg, 10.0 * deg) - 20.0 * deg).abs() < 1e-12);
        assert!((distance(10.0 * deg, 350.0 * deg) - 20.0 * deg).abs() < 1e-12);
        assert!((distance(0.0, PI) - PI).abs() < 1e-12);
        assert!(
            (mean_absolute_error(&[0.0, 90.0 * deg], &[20.0 * deg, 60.0 * deg]) - 25.0 * deg).abs()
                < 1e-12
        );
    }

    #[test]
    fn correlation_of_rotated_and_reflected_angles() {
        // A rotation of the same angles keeps the coefficient at 1; a reflection turns it to −1 (both follow from
        // the definition: sin(β − β̄) = ±sin(α − ᾱ) term by term).
        let a = [0.1, 0.9, 2.0, 3.5, 5.0, 6.0];
        let rotated: Vec<f64> = a.iter().map(|x| x + 1.3).collect();
        let reflected: Vec<f64> = a.iter().map(|x| -x).collect();
        assert!((correlation(&a, &rotated) - 1.0).abs() < 1e-12);
        assert!((correlation(&a, &reflected) + 1.0).abs() < 1e-12);
    }
}
