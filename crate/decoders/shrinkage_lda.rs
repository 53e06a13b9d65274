//! Linear discriminant analysis with Ledoit–Wolf shrinkage of the within-class covariance.
//!
//! With many neurons and few trials the sample covariance is singular or badly conditioned; Ledoit & Wolf (2004)
//! give the closed-form weight that mixes it with a scaled identity so as to minimise the expected squared error.
//! Following the construction of scikit-learn's LinearDiscriminantAnalysis(solver='lsqr', shrinkage='auto')
//! (scikit-learn 1.9), which the reference checks compare against fold by fold:
//! 1. for each class, centre its trials, scale each feature to unit SD (SD 0 → scale 1), take the Ledoit–Wolf
//!    shrunk covariance of that, and scale it back;
//! 2. pool the class covariances weighted by the class proportions;
//! 3. the discriminant of class k is `x·Σ⁻¹μₖ − ½ μₖ·Σ⁻¹μₖ + ln πₖ`, with πₖ the training proportion.
//!
//! Σ is solved by Cholesky; when shrinkage is 0 and Σ is singular, the smallest ridge that makes it positive
//! definite is added (see [`cholesky_with_ridge`]).

use super::linalg::{cholesky_solve, cholesky_with_ridge, dot, gram};
use super::{argmax, present_classes, Decoder, Model};

pub struct ShrinkageLda;

struct LdaModel {
    classes: Vec<usize>,
    /// Row per present class: `p` coefficients.
    coef: Vec<Vec<f64>>,
    intercept: Vec<f64>,
}

impl Decoder for ShrinkageLda {
    fn fit(&self, x: &[f64], n: usize, p: usize, y: &[usize], n_classes: usize) -> Box<dyn Model> {
        let classes = present_classes(y, n_classes);
        let mut pooled = vec![0.0; p * p];
        let mut means = Vec::with_capacity(classes.len());
        let mut priors = Vec::with_capacity(classes.len());
        for &k in &classes {
            let rows: Vec<usize> = (0..n).filter(|&i| y[i] == k).collect();
            let nk = rows.len();
            let mut mean = vec![0.0; p];
            for &i in &rows {
                for (m, v) in mean.iter_mut().zip(&x[i * p..(i + 1) * p]) {
                    *m += v;
                }
            }
            for m in &mut mean {
                *m /= nk as f64;
            }
            let prior = nk as f64 / n as f64;
            let cov = class_covariance(x, p, &rows, &mean);
            for (acc, v) in pooled.iter_mut().zip(&cov) {
                *acc += prior * v;
            }
            means.push(mean);
            priors.push(prior);
        }
        let (l, _ridge) = cholesky_with_ridge(&pooled, p);
        let mut coef = Vec::with_capacity(classes.len());
        let mut intercept = Vec::with_capacity(classes.len());
        for (mean, prior) in means.iter().zip(&priors) {
            let mut w = mean.clone();
            cholesky_solve(&l, p, &mut w);
            intercept.push(-0.5 * dot(mean, &w) + libm::log(*prior));
            coef.push(w);
        }
        Box::new(LdaModel {
            classes,
            coef,
            intercept,
        })
    }
}

impl Model for LdaModel {
    fn predict(&self, x: &[f64]) -> Vec<usize> {
        let p = self.coef[0].len();
        x.chunks_exact(p)
            .map(|row| {
                let scores: Vec<f64> = self
                    .coef
                    .iter()
                    .zip(&self.intercept)
                    .map(|(w, b)| dot(w, row) + b)
                    .collect();
                self.classes[argmax(&scores)]
            })
            .collect()
    }
}

/// Ledoit–Wolf covariance of one class, computed on unit-SD features and scaled back.
fn class_covariance(x: &[f64], p: usize, rows: &[usize], mean: &[f64]) -> Vec<f64> {
    let n = rows.len();
    let mut z = Vec::with_capacity(n * p);
    for &i in rows {
        z.extend(x[i * p..(i + 1) * p].iter().zip(mean).map(|(v, m)| v - m));
    }
    let mut scale = vec![0.0; p];
    for row in z.chunks_exact(p) {
        for (s, v) in scale.iter_mut().zip(row) {
            *s += v * v;
        }
    }
    for s in &mut scale {
        let sd = (*s / n as f64).sqrt();
        // The zero-variance rule of scikit-learn's StandardScaler (scale below 10 machine epsilons → 1).
        *s = if sd < 10.0 * f64::EPSILON { 1.0 } else { sd };
    }
    for row in z.chunks_exact_mut(p) {
        for (v, s) in row.iter_mut().zip(&scale) {
            *v /= s;
        }
    }
    let mut cov = ledoit_wolf(&z, n, p);
    for i in 0..p {
        for j in 0..p {
            cov[i * p + j] *= scale[i] * scale[j];
        }
    }
    cov
}

/// Ledoit–Wolf shrunk covariance of centred row-major `z` (n × p).
///
/// Returns `(1 − s)·S + s·μ·I` with `S = ZᵀZ/n`, `μ = tr(S)/p` and the shrinkage `s` of Ledoit & Wolf (2004,
/// lemma 3.2 and section 3.3), in the form scikit-learn's `ledoit_wolf_shrinkage` writes it.
pub fn ledoit_wolf(z: &[f64], n: usize, p: usize) -> Vec<f64> {
    let mut cov = gram(z, n, p);
    let s = shrinkage_from_gram(z, &cov, n, p);
    let nf = n as f64;
    for v in &mut cov {
        *v /= nf;
    }
    let mu = (0..p).map(|i| cov[i * p + i]).sum::<f64>() / p as f64;
    for v in &mut cov {
        *v *= 1.0 - s;
    }
    for i in 0..p {
        cov[i * p + i] += s * mu;
    }
    cov
}

/// The shrinkage weight in [0, 1].
pub fn ledoit_wolf_shrinkage(z: &[f64], n: usize, p: usize) -> f64 {
    shrinkage_from_gram(z, &gram(z, n, p), n, p)
}

/// [`ledoit_wolf_shrinkage`] given `g = ZᵀZ`, which the caller needs anyway (the Gram matrix is most of the cost).
fn shrinkage_from_gram(z: &[f64], g: &[f64], n: usize, p: usize) -> f64 {
    if p == 1 {
        return 0.0; // the target equals the estimate
    }
    let (nf, pf) = (n as f64, p as f64);
    let trace = (0..p).map(|i| g[i * p + i]).sum::<f64>() / nf; // Σ diag(S)
    let mu = trace / pf;
    // Σᵢⱼ (Σₙ zₙᵢ² zₙⱼ²) = Σₙ (Σᵢ zₙᵢ²)²: the sum of (Z∘Z)ᵀ(Z∘Z) without forming it.
    let beta_sum: f64 = z.chunks_exact(p).map(|row| dot(row, row).powi(2)).sum();
    let delta_sum = g.iter().map(|v| v * v).sum::<f64>() / (nf * nf);
    let beta = (beta_sum / nf - delta_sum) / (pf * nf);
    let delta = (delta_sum - 2.0 * mu * trace + pf * mu * mu) / pf;
    let beta = beta.min(delta);
    if beta <= 0.0 || delta <= 0.0 {
        0.0
    } else {
        beta / delta
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shrinkage_matches_hand_calculation() {
        // Two centred samples ±v, v = (1, 2, −1): S = vvᵀ, tr S = 6, μ = 2; Σₙ(|zₙ|²)² = 72, Σ(ZᵀZ)²/n² = 36, so
        // β = (72/2 − 36)/(3·2) = 0 and the weight is 0: the spread of the samples says nothing against S.
        let z = [1.0, 2.0, -1.0, -1.0, -2.0, 1.0];
        assert_eq!(ledoit_wolf_shrinkage(&z, 2, 3), 0.0);
        // Four samples on the axes, z = (±2, 0), (0, ±1): S = diag(2, 0.5), μ = 1.25.
        // Σₙ(|zₙ|²)² = 16+16+1+1 = 34; ZᵀZ = diag(8, 2), Σ G² / n² = 68/16 = 4.25.
        // β = (34/4 − 4.25)/(2·4) = 0.53125; δ = (4.25 − 2·1.25·2.5 + 2·1.5625)/2 = 0.5625; s = β/δ = 0.9444…
        let z = [2.0, 0.0, -2.0, 0.0, 0.0, 1.0, 0.0, -1.0];
        let s = ledoit_wolf_shrinkage(&z, 4, 2);
        assert!((s - 0.53125 / 0.5625).abs() < 1e-12, "{s}");
    }

    #[test]
    fn separates_two_gaussian_like_clusters() {
        let x = [
            -2.0, 0.1, -2.1, -0.1, -1.9, 0.0, 2.0, 0.1, 2.1, -0.1, 1.9, 0.0,
        ];
        let y = [0, 0, 0, 1, 1, 1];
        let m = ShrinkageLda.fit(&x, 6, 2, &y, 2);
        assert_eq!(m.predict(&[-1.0, 0.0, 1.0, 0.0]), vec![0, 1]);
    }
}
