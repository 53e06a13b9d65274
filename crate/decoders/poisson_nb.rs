//! Poisson naive Bayes, for spike counts: each neuron fires independently as a Poisson variable whose mean λ depends
//! on the class.
//!
//! λ for neuron j in class k is `(Σ counts + 0.5) / nₖ`, the posterior mean under Jeffreys' prior for a Poisson
//! rate (from memory), so that a neuron silent in one class's training trials does not make that class impossible.
//! A trial's log posterior is `ln πₖ + Σⱼ (xⱼ ln λₖⱼ − λₖⱼ)` (the `ln xⱼ!` term is the same for every class).
//! The input must be counts, not standardised values, so this decoder asks the pipeline not to standardise. Rates
//! (count / window) give the same decisions as counts when the classes are balanced (the scale only shifts every
//! class's score alike, apart from the prior's weight). From spike events the window is known, and a time course
//! hands this decoder the exact counts.

use super::{argmax, present_classes, Decoder, Model};

pub struct PoissonNb;

struct PoissonModel {
    classes: Vec<usize>,
    log_rates: Vec<Vec<f64>>,
    /// ln prior − Σ λ, per class.
    constants: Vec<f64>,
}

impl Decoder for PoissonNb {
    fn fit(&self, x: &[f64], n: usize, p: usize, y: &[usize], n_classes: usize) -> Box<dyn Model> {
        let classes = present_classes(y, n_classes);
        let (mut log_rates, mut constants) = (Vec::new(), Vec::new());
        for &k in &classes {
            let rows: Vec<usize> = (0..n).filter(|&i| y[i] == k).collect();
            let nk = rows.len() as f64;
            let mut sums = vec![0.0; p];
            for &i in &rows {
                for (s, v) in sums.iter_mut().zip(&x[i * p..(i + 1) * p]) {
                    *s += v;
                }
            }
            let rates: Vec<f64> = sums.iter().map(|s| (s + 0.5) / nk).collect();
            constants.push(libm::log(nk / n as f64) - rates.iter().sum::<f64>());
            log_rates.push(rates.iter().map(|r| libm::log(*r)).collect());
        }
        Box::new(PoissonModel {
            classes,
            log_rates,
            constants,
        })
    }

    fn standardise(&self) -> bool {
        false
    }
}

impl PoissonModel {
    /// Log joint likelihood of each class for one row of counts (up to a constant shared by the classes).
    fn scores(&self, row: &[f64]) -> Vec<f64> {
        (0..self.classes.len())
            .map(|k| self.constants[k] + super::linalg::dot(row, &self.log_rates[k]))
            .collect()
    }
}

impl Model for PoissonModel {
    fn predict(&self, x: &[f64]) -> Vec<usize> {
        let p = self.log_rates[0].len();
        x.chunks_exact(p)
            .map(|row| self.classes[argmax(&self.scores(row))])
            .collect()
    }

    fn decision(&self, x: &[f64]) -> Vec<f64> {
        let p = self.log_rates[0].len();
        x.chunks_exact(p)
            .map(|row| super::two_class_margin(&self.scores(row)))
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_posterior_by_hand() {
        // One neuron; class 0 counts 0, 2 → λ = 2.5/2 = 1.25; class 1 counts 6, 8 → λ = 14.5/2 = 7.25.
        // For x = 3: ln½ + 3 ln 1.25 − 1.25 = −1.274 vs ln½ + 3 ln 7.25 − 7.25 = −2.000: class 0 wins.
        // For x = 5: 5 ln 1.25 − 1.25 = −0.134 vs 5 ln 7.25 − 7.25 = 2.655: class 1 wins.
        let m = PoissonNb.fit(&[0.0, 2.0, 6.0, 8.0], 4, 1, &[0, 0, 1, 1], 2);
        assert_eq!(m.predict(&[3.0, 5.0]), vec![0, 1]);
        // A class that never fired still has a positive rate: no −∞, no NaN.
        let m = PoissonNb.fit(&[0.0, 0.0, 4.0, 4.0], 4, 1, &[0, 0, 1, 1], 2);
        assert_eq!(m.predict(&[0.0, 1.0, 4.0]), vec![0, 0, 1]);
    }
}
