//! Logistic regression with an L2 penalty: binary for two classes, multinomial (softmax) for more.
//!
//! Minimises `C Σᵢ −ln p(yᵢ | xᵢ) + ½‖W‖²` over the weights W and unpenalised intercepts, the objective of
//! scikit-learn's LogisticRegression(penalty='l2', C) (scikit-learn 1.9 documentation), by limited-memory BFGS
//! (Nocedal & Wright, 2006, algorithm 7.4, memory 10) with a backtracking line search on the sufficient-decrease
//! condition. Strictly convex, so the optimum is unique and the solver only decides how fast it is reached. With two
//! classes the model has one weight vector (the binary loss), as scikit-learn's has; a two-class softmax would
//! penalise a different parametrisation and reach a different decoder.

use super::linalg::{axpy, dot};
use super::{present_classes, Decoder, LinearModel, Model};

/// Stop when the gradient's norm falls below this fraction of its norm at the start.
pub const TOLERANCE: f64 = 1e-8;
/// Iterations before giving up (the fit is then flagged).
pub const MAX_ITERATIONS: usize = 1000;
const MEMORY: usize = 10;

pub struct Logistic {
    pub c: f64,
}

/// The objective and its gradient for parameters laid out as `outputs × (p + 1)`.
struct Problem<'a> {
    x: &'a [f64],
    p: usize,
    /// Class index into the present classes, per trial.
    target: Vec<usize>,
    outputs: usize,
    c: f64,
}

impl Problem<'_> {
    fn value_and_gradient(&self, theta: &[f64], grad: &mut [f64]) -> f64 {
        let (p, q) = (self.p, self.p + 1);
        grad.fill(0.0);
        let mut loss = 0.0;
        let mut scores = vec![0.0; self.outputs];
        let mut resid = vec![0.0; self.outputs];
        for (row, &t) in self.x.chunks_exact(p).zip(&self.target) {
            for (o, s) in scores.iter_mut().enumerate() {
                let w = &theta[o * q..(o + 1) * q];
                *s = dot(&w[..p], row) + w[p];
            }
            if self.outputs == 1 {
                // Binary: p(class 1) = σ(s); loss = ln(1 + e^{−s}) for class 1, ln(1 + e^{s}) for class 0.
                let s = scores[0];
                let sign = if t == 1 { 1.0 } else { -1.0 };
                let m = sign * s;
                loss += if m > 0.0 {
                    libm::log1p(libm::exp(-m))
                } else {
                    -m + libm::log1p(libm::exp(m))
                };
                let prob1 = 1.0 / (1.0 + libm::exp(-s));
                resid[0] = prob1 - if t == 1 { 1.0 } else { 0.0 };
            } else {
                let top = scores.iter().copied().fold(f64::NEG_INFINITY, f64::max);
                let sum: f64 = scores.iter().map(|s| libm::exp(s - top)).sum();
                let log_norm = top + libm::log(sum);
                loss += log_norm - scores[t];
                for (o, r) in resid.iter_mut().enumerate() {
                    *r = libm::exp(scores[o] - log_norm) - if o == t { 1.0 } else { 0.0 };
                }
            }
            for (o, &r) in resid.iter().enumerate() {
                let g = &mut grad[o * q..(o + 1) * q];
                axpy(self.c * r, row, &mut g[..p]);
                g[p] += self.c * r;
            }
        }
        let mut penalty = 0.0;
        for o in 0..self.outputs {
            let w = &theta[o * q..o * q + p];
            penalty += dot(w, w);
            axpy(1.0, w, &mut grad[o * q..o * q + p]);
        }
        self.c * loss + 0.5 * penalty
    }
}

/// Limited-memory BFGS from zero; returns the minimiser and whether the iteration cap was hit.
fn lbfgs(problem: &Problem, size: usize) -> (Vec<f64>, bool) {
    let mut theta = vec![0.0; size];
    let mut grad = vec![0.0; size];
    let mut f = problem.value_and_gradient(&theta, &mut grad);
    let first = dot(&grad, &grad).sqrt();
    if first == 0.0 {
        return (theta, false);
    }
    let (mut s_hist, mut y_hist, mut rho): (Vec<Vec<f64>>, Vec<Vec<f64>>, Vec<f64>) =
        (vec![], vec![], vec![]);
    let mut next_grad = vec![0.0; size];
    for iteration in 0..MAX_ITERATIONS {
        if crate::stop::requested() {
            break;
        }
        // Two-loop recursion for the search direction d = −H∇f.
        let mut d: Vec<f64> = grad.iter().map(|g| -g).collect();
        let mut alpha = vec![0.0; s_hist.len()];
        for i in (0..s_hist.len()).rev() {
            alpha[i] = rho[i] * dot(&s_hist[i], &d);
            axpy(-alpha[i], &y_hist[i], &mut d);
        }
        let gamma = match (s_hist.last(), y_hist.last()) {
            (Some(s), Some(y)) => dot(s, y) / dot(y, y),
            _ => 1.0 / first,
        };
        d.iter_mut().for_each(|v| *v *= gamma);
        for i in 0..s_hist.len() {
            let beta = rho[i] * dot(&y_hist[i], &d);
            axpy(alpha[i] - beta, &s_hist[i], &mut d);
        }
        let slope = dot(&grad, &d);
        // Backtracking on the sufficient-decrease (Armijo) condition, from the full step.
        let mut step = 1.0;
        let mut trial = theta.clone();
        let f_next = loop {
            trial.copy_from_slice(&theta);
            axpy(step, &d, &mut trial);
            let value = problem.value_and_gradient(&trial, &mut next_grad);
            if value <= f + 1e-4 * step * slope || step < 1e-20 {
                break value;
            }
            step *= 0.5;
        };
        let s: Vec<f64> = trial.iter().zip(&theta).map(|(a, b)| a - b).collect();
        let y: Vec<f64> = next_grad.iter().zip(&grad).map(|(a, b)| a - b).collect();
        let sy = dot(&s, &y);
        theta.copy_from_slice(&trial);
        grad.copy_from_slice(&next_grad);
        let improved = f - f_next;
        f = f_next;
        if dot(&grad, &grad).sqrt() <= TOLERANCE * first || (improved <= 0.0 && iteration > 0) {
            return (theta, false);
        }
        if sy > 1e-12 * dot(&y, &y).sqrt() * dot(&s, &s).sqrt() {
            if s_hist.len() == MEMORY {
                s_hist.remove(0);
                y_hist.remove(0);
                rho.remove(0);
            }
            rho.push(1.0 / sy);
            s_hist.push(s);
            y_hist.push(y);
        }
    }
    (theta, true)
}

impl Decoder for Logistic {
    fn fit(&self, x: &[f64], _n: usize, p: usize, y: &[usize], n_classes: usize) -> Box<dyn Model> {
        let classes = present_classes(y, n_classes);
        let target: Vec<usize> = y
            .iter()
            .map(|c| classes.binary_search(c).expect("a present class"))
            .collect();
        let outputs = if classes.len() == 2 { 1 } else { classes.len() };
        let problem = Problem {
            x,
            p,
            target,
            outputs,
            c: self.c,
        };
        let (theta, capped) = lbfgs(&problem, outputs * (p + 1));
        Box::new(LinearModel {
            classes,
            w: theta.chunks(p + 1).map(<[f64]>::to_vec).collect(),
            capped,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gradient_matches_finite_differences() {
        let x = [0.5, -1.0, 1.5, 0.2, -0.3, 0.8, 1.0, 1.0];
        for (target, outputs) in [(vec![0, 1, 2, 1], 3), (vec![0, 1, 1, 0], 1)] {
            let problem = Problem {
                x: &x,
                p: 2,
                target,
                outputs,
                c: 0.7,
            };
            let theta: Vec<f64> = (0..outputs * 3).map(|i| 0.1 * i as f64 - 0.2).collect();
            let mut g = vec![0.0; theta.len()];
            problem.value_and_gradient(&theta, &mut g);
            for i in 0..theta.len() {
                let h = 1e-6;
                let (mut up, mut down) = (theta.clone(), theta.clone());
                up[i] += h;
                down[i] -= h;
                let mut scratch = vec![0.0; theta.len()];
                let numeric = (problem.value_and_gradient(&up, &mut scratch)
                    - problem.value_and_gradient(&down, &mut scratch))
                    / (2.0 * h);
                assert!(
                    (numeric - g[i]).abs() < 1e-6,
                    "{outputs} outputs, {i}: {numeric} vs {}",
                    g[i]
                );
            }
        }
    }

    #[test]
    fn separates_three_clusters() {
        let x = [
            -3.0, 0.0, -2.8, 0.2, 3.0, 0.0, 2.9, -0.1, 0.0, 3.0, 0.1, 2.9,
        ];
        let m = Logistic { c: 1.0 }.fit(&x, 6, 2, &[0, 0, 1, 1, 2, 2], 3);
        assert_eq!(m.predict(&[-3.0, 0.1, 3.1, 0.0, 0.0, 3.2]), vec![0, 1, 2]);
        assert!(!m.hit_iteration_cap());
    }
}
