//! Gaussian naive Bayes: each neuron independently normal within a class, with its own class mean and variance.
//!
//! As scikit-learn's GaussianNB (scikit-learn 1.9 documentation): class variances are maximum-likelihood (divisor
//! n), each increased by `1e-9 ×` the largest feature variance over all training trials (its `var_smoothing`), and
//! class priors are the training proportions. A trial goes to the class of largest log posterior.

use super::{argmax, present_classes, two_class_margin, Decoder, Model};

/// scikit-learn's default `var_smoothing`.
pub const VAR_SMOOTHING: f64 = 1e-9;

pub struct GaussianNb;

struct NbModel {
    classes: Vec<usize>,
    means: Vec<Vec<f64>>,
    vars: Vec<Vec<f64>>,
    /// ln prior − ½ Σ ln(2π var), per class.
    constants: Vec<f64>,
}

/// Mean and variance (divisor n) of each column of the rows `rows`.
pub(crate) fn moments(x: &[f64], p: usize, rows: &[usize]) -> (Vec<f64>, Vec<f64>) {
    let n = rows.len() as f64;
    let mut mean = vec![0.0; p];
    for &i in rows {
        for (m, v) in mean.iter_mut().zip(&x[i * p..(i + 1) * p]) {
            *m += v;
        }
    }
    mean.iter_mut().for_each(|m| *m /= n);
    let mut var = vec![0.0; p];
    for &i in rows {
        for ((s, v), m) in var.iter_mut().zip(&x[i * p..(i + 1) * p]).zip(&mean) {
            *s += (v - m) * (v - m);
        }
    }
    var.iter_mut().for_each(|s| *s /= n);
    (mean, var)
}

impl Decoder for GaussianNb {
    fn fit(&self, x: &[f64], n: usize, p: usize, y: &[usize], n_classes: usize) -> Box<dyn Model> {
        let classes = present_classes(y, n_classes);
        let all: Vec<usize> = (0..n).collect();
        let (_, total_var) = moments(x, p, &all);
        let epsilon = VAR_SMOOTHING * total_var.iter().copied().fold(0.0, f64::max);
        let (mut means, mut vars, mut constants) = (Vec::new(), Vec::new(), Vec::new());
        for &k in &classes {
            let rows: Vec<usize> = (0..n).filter(|&i| y[i] == k).collect();
            let (mean, mut var) = moments(x, p, &rows);
            var.iter_mut().for_each(|v| *v += epsilon);
            let log_det: f64 = var
                .iter()
                .map(|v| libm::log(2.0 * std::f64::consts::PI * v))
                .sum();
            constants.push(libm::log(rows.len() as f64 / n as f64) - 0.5 * log_det);
            means.push(mean);
            vars.push(var);
        }
        Box::new(NbModel {
            classes,
            means,
            vars,
            constants,
        })
    }
}

impl NbModel {
    /// Log joint likelihood of each class for one row (up to a constant shared by the classes).
    fn scores(&self, row: &[f64]) -> Vec<f64> {
        (0..self.classes.len())
            .map(|k| {
                let quad: f64 = row
                    .iter()
                    .zip(&self.means[k])
                    .zip(&self.vars[k])
                    .map(|((v, m), s)| (v - m) * (v - m) / s)
                    .sum();
                self.constants[k] - 0.5 * quad
            })
            .collect()
    }
}

impl Model for NbModel {
    fn predict(&self, x: &[f64]) -> Vec<usize> {
        let p = self.means[0].len();
        x.chunks_exact(p)
            .map(|row| self.classes[argmax(&self.scores(row))])
            .collect()
    }

    fn decision(&self, x: &[f64]) -> Vec<f64> {
        let p = self.means[0].len();
        x.chunks_exact(p)
            .map(|row| two_class_margin(&self.scores(row)))
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_wide_class_wins_far_from_both_means() {
        // Class 0: values near 0 with SD ~0.1; class 1: near 1 with SD ~2. A trial at −3 is nearer class 0's mean
        // but far more likely under class 1's spread.
        let x = [-0.1, 0.1, 0.0, -2.0, 3.0, 2.0];
        let y = [0, 0, 0, 1, 1, 1];
        let m = GaussianNb.fit(&x, 6, 1, &y, 2);
        assert_eq!(m.predict(&[0.05, -3.0]), vec![0, 1]);
    }
}
