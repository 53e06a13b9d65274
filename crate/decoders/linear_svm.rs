//! Linear support vector machine: L2-regularised squared hinge loss, solved in the dual by coordinate descent.
//!
//! The algorithm is the dual coordinate descent of Hsieh, Chang, Lin, Keerthi & Sundararajan (ICML 2008), with the
//! shrinking heuristic and the stopping rule on the spread of the projected gradient described there. For the
//! squared hinge (L2-loss) variant the dual has no upper bound on α and a diagonal term 1/(2C). The intercept is
//! learnt as the weight of a constant feature equal to 1 (so it is regularised too, the usual convention of this
//! formulation). More than two classes: one-vs-rest, predicting the class with the largest decision value.
//!
//! The visiting order of coordinates is a permutation drawn from a fixed-seed SplitMix64 sequence inside each fit:
//! deterministic (it uses none of the recipe's random streams) yet free of the slow convergence of a cyclic order.
//!
//! The dual has one variable per training trial. When a fold has more than three trials per feature (+1 for the
//! intercept; the crossovers measured in `dual_passes`), the same objective is smaller in the primal, and dual
//! coordinate descent can crawl there (measured on invented 232 × 52 data: hundreds of passes per fit, as
//! scikit-learn's dual LinearSVC also reports). Those fits use the finite Newton method for the primal
//! squared-hinge objective (Keerthi & DeCoste, JMLR 2005): each step solves `(I + 2C·X̃ᵢᵀX̃ᵢ) d = −∇f` over the
//! trials inside the margin, then goes to the exact minimum along d (`exact_step`); from 3 to 4.5 trials per
//! feature it starts where a short run of the dual stopped, which saves it half its steps. Both routes minimise
//! the same strictly convex function, so they reach the same decoder; the choice only saves time (the same choice
//! scikit-learn's LinearSVC makes with `dual="auto"` at one trial per feature, scikit-learn 1.9 documentation).
//!
//! Where the data's scale bounds the problem's conditioning ([`single_precision`]), the dual's passes run on rows
//! rounded to single precision and the Newton method keeps its Cholesky factor in single precision; the result is
//! always finished and tested in double precision (the dual from the same α, or the Newton method's exact gradient
//! and line search), so the objective and its stopping rules are those of a fit in double precision throughout,
//! and the weights differ from such a fit's only within those rules' tolerances.

use super::linalg::{
    axpy, cholesky_owned, cholesky_rank_one, cholesky_solve, cholesky_with_ridge, dot_wide, gram,
    Real,
};
use super::simd::multiversion;
use super::{present_classes, Decoder, LinearModel, Model};

/// Stop when the projected gradient's spread (max − min) falls below this. The usual default of this solver is 0.1
/// (from memory of liblinear's documentation); with the dual also taking folds of up to three trials per feature
/// (`dual_passes`), 0.1 moved 1 % of the test trials of the reference case with 240 trials × 120 units
/// away from scikit-learn's optimum, and 0.01 reproduces it on every reference case (tests/reference).
pub const TOLERANCE: f64 = 1e-2;
/// Passes of the dual before a fit that is still moving is handed to the primal Newton method, started from where
/// the dual stopped. Measured (2026-12-04, invented odour table of 1000 trials × 400 neurons, 4 classes, training
/// folds of 800): fits on the real labels finished in 100–270 passes, but fits on shuffled labels, where nothing
/// separates the classes, reached the old cap of 1000 passes in 30 of 45 fits without meeting the tolerance (the
/// shuffle control's decoders then stopped short of their optimum, unlike the observed ones), at five times the
/// time of a real-label fit.
pub const HANDOVER_PASSES: usize = 300;
/// Passes of the dual before the primal Newton method takes over, at 3 to 4.5 training trials per feature
/// ([`dual_passes`]): enough to bring the primal near its final set of trials inside the margin (40–120 passes
/// took the same time at 1600 × 400, 2026-12-05).
pub const SHORT_DUAL_PASSES: usize = 60;
/// Passes of the dual before the primal Newton method takes over with 600 features or more at 3 to 3.5 training
/// trials per feature ([`dual_passes`]). A Newton step's cost grows with the square (updates) and cube (factors) of
/// the features, a pass of the dual only linearly, so where the features are many and about as many trials end
/// inside the margin, more of the dual's cheap passes pay (measured 2026-12-05: 3200 × 1001 one repeat 6.1 → 4.7 s,
/// 2400 × 701 1.64 → 1.38 s; at 4 trials per feature, 3200 × 801, 150 passes cost 3.09 → 3.47 s).
pub const WIDE_DUAL_PASSES: usize = 150;
/// Largest `2C·Σᵢ‖x̃ᵢ‖²` (over a fit's training trials) for which the solvers work partly in single precision
/// ([`single_precision`]): 2²³, so that the bound it sets on the Hessian's condition number, times single
/// precision's rounding unit 2⁻²⁴, stays near ½. A heuristic: the bound (a trace) is far above the largest
/// eigenvalue on real data, and the factor's updates add rounding of their own.
pub const SINGLE_PRECISION_LIMIT: f64 = 8_388_608.0;
/// Primal route: stop when the gradient norm falls below this fraction of its value at w = 0.
pub const NEWTON_TOLERANCE: f64 = 1e-8;
/// Primal route: Newton steps before giving up (the fit is then flagged).
pub const MAX_NEWTON_STEPS: usize = 100;

pub struct LinearSvm {
    pub c: f64,
}

impl Decoder for LinearSvm {
    fn fit(&self, x: &[f64], n: usize, p: usize, y: &[usize], n_classes: usize) -> Box<dyn Model> {
        let classes = present_classes(y, n_classes);
        let sq_norms: Vec<f64> = (0..n)
            .map(|i| dot_wide(&x[i * p..(i + 1) * p], &x[i * p..(i + 1) * p]) + 1.0)
            .collect();
        // Primal route: at w = 0 every trial is inside the margin for every class, so the first Hessian and its
        // factor are the same for all one-vs-rest problems: compute them once.
        let passes = dual_passes(n, p);
        let (gram_all, factor0) = if passes == 0 {
            let gram_all = augmented_gram(x, n, p);
            let mut h0: Vec<f64> = gram_all.iter().map(|g| 2.0 * self.c * g).collect();
            for a in 0..=p {
                h0[a * (p + 1) + a] += 1.0;
            }
            let factor0 = cholesky_with_ridge(&h0, p + 1).0;
            (gram_all, factor0)
        } else {
            (Vec::new(), Vec::new())
        };
        let single = single_precision(&sq_norms, self.c);
        let rows_single: Vec<f32> = if single && passes > 0 {
            x.iter().map(|&v| v as f32).collect()
        } else {
            Vec::new()
        };
        let mut capped = false;
        let mut solve = |positive: usize| {
            let signs: Vec<f64> = y
                .iter()
                .map(|&c| if c == positive { 1.0 } else { -1.0 })
                .collect();
            let (w, hit_cap) = if passes == 0 {
                let start = Start::Zero {
                    gram_all: &gram_all,
                    factor0: &factor0,
                };
                primal_newton(x, n, p, &signs, self.c, start, single)
            } else {
                let dual_route = dual_route(n, p);
                let mut alpha = vec![0.0; n];
                let rows = if single {
                    Rows::Single(&rows_single)
                } else {
                    Rows::Double(x)
                };
                let (mut w, mut moving) =
                    dual_cd(rows, p, &signs, &sq_norms, self.c, passes, &mut alpha);
                if single && dual_route && !moving {
                    // Met the stopping rule in single precision: meet it again in double, from the same α.
                    (w, moving) = dual_cd(
                        Rows::Double(x),
                        p,
                        &signs,
                        &sq_norms,
                        self.c,
                        passes,
                        &mut alpha,
                    );
                }
                if moving || !dual_route {
                    // The primal Newton method finishes the same objective from here.
                    primal_newton(x, n, p, &signs, self.c, Start::From(&w), single)
                } else {
                    (w, false)
                }
            };
            capped |= hit_cap;
            w
        };
        let w = if classes.len() == 2 {
            // One problem suffices: the second class is the positive one.
            vec![solve(classes[1])]
        } else {
            classes.iter().map(|&k| solve(k)).collect()
        };
        Box::new(LinearModel { classes, w, capped })
    }
}

/// Whether a fit works partly in single precision: the dual's passes on rows rounded to single precision (then
/// finished in double, by the dual from the same α or by the primal Newton method), and the primal Newton method's
/// Cholesky factor kept and updated in single precision (its gradients, margins, line search and stopping rule stay
/// in double). Single precision moves half the bytes and fits twice the values in a register; measured on the
/// grid's tables (2026-12-05, one thread): 4000 × 1000 5.9 → 3.7 s per repeat, 2000 × 400 3.8 → 3.2 s,
/// 400 × 200 0.178 → 0.126 s, 1000 × 1000 1.27 → 0.96 s, 248 × 100 0.080 → 0.075 s.
///
/// Neither use changes the objective or the test that its optimum is reached: a single-precision pass of the dual
/// only chooses where the double-precision solver starts, and a factor in single precision only changes the
/// direction of a Newton step, whose gradient and exact line search are computed in double, so every step still
/// descends and the method stops on the same rule; the weights returned differ from a fit in double precision
/// throughout only within the stopping rules' tolerances. What a factor's rounding can cost is extra steps, more
/// of them the worse the Hessian `I + 2C·Σ x̃ᵢx̃ᵢᵀ` is conditioned (at the step cap the method goes on in double:
/// [`primal_newton`]); its eigenvalues lie between 1 and `1 + 2C·Σ‖x̃ᵢ‖²` (`sq_norms` holds `‖x̃ᵢ‖²`), so single
/// precision is used only while that bound stays under [`SINGLE_PRECISION_LIMIT`]. Standardised features give about
/// `2C·n·(p + 1)`: 6.4 × 10⁶ for 3200 training trials × 1000 neurons at C = 1; larger C or more trials fall back to
/// double precision throughout.
fn single_precision(sq_norms: &[f64], c: f64) -> bool {
    let bound = 2.0 * c * sq_norms.iter().sum::<f64>();
    bound.is_finite() && bound <= SINGLE_PRECISION_LIMIT
}

/// Whether the dual's optimum is the fit (up to three training trials per feature, +1 for the intercept); beyond, the
/// dual at most starts the primal Newton method, whose stopping rule is the tighter one ([`dual_passes`]).
fn dual_route(n: usize, p: usize) -> bool {
    n <= 3 * (p + 1)
}

/// Passes of the dual a fit on `n` trials of `p` features gets before the primal Newton method takes over from where
/// it stopped (0: the primal from w = 0, whose first step's factor the classes share). The dual has one variable
/// per trial, the primal one per feature, but the primal's Newton steps cost about `p` times more per variable, and
/// the dual crawls on many trials that overlap. Measured with `popdecode-bench grid` (one thread, invented odour
/// tables with 10 weakly tuned neurons, 4 classes, training folds of 4/5 of the trials):
/// - up to 3 training trials per feature (+1 for the intercept), the dual: at 2 it was 2–5 times faster than the
///   primal (198 × 100, 320 × 200, 800 × 400; 2026-12-03);
/// - from 3 to 4.5, with 150 features or more, [`SHORT_DUAL_PASSES`] of the dual, then the primal: 1600 × 400 took
///   4.1 s against the primal's 5.3 s from w = 0 (the dual's 60 passes bring the Newton steps from 509 to 272 in
///   all, the refactorings from 117 to 50), 3200 × 1000 6.0 s against 8.1 s, 800 × 200 0.63 against 0.79 s; with
///   fewer features the primal's factor is cheap and the short dual cost more: 400 × 100 0.150 against 0.133 s,
///   198 × 50 0.052 against 0.030 s (2026-12-05); with 600 features or more and up to 3.5 trials per feature,
///   [`WIDE_DUAL_PASSES`] instead: at 3200 × 1001 (one repeat of the grid's 4000 × 1000) 120, 150, 200 and 300
///   passes took 4.9, 4.7, 5.0 and 5.1 s against 6.1 s for 60, at 2400 × 701 150 passes 1.38 s against 1.64 s, but
///   with fewer features they did not pay (1360 × 401 0.66 s either way, 640 × 201 0.113 against 0.090 s) nor at 4
///   trials per feature (3200 × 801 3.47 against 3.09 s; 2026-12-05);
/// - beyond, the primal from w = 0: at 5 the two were even (2000 × 400), at 6 the short dual cost 20–50 % more
///   (2400 × 400, 1200 × 200), at 8 it nearly doubled the time (800 × 100, 1600 × 200).
fn dual_passes(n: usize, p: usize) -> usize {
    let q = p + 1;
    if dual_route(n, p) {
        HANDOVER_PASSES
    } else if 2 * n <= 7 * q && q >= 600 {
        WIDE_DUAL_PASSES
    } else if 2 * n <= 9 * q && q >= 150 {
        SHORT_DUAL_PASSES
    } else {
        0
    }
}

/// The training rows as the dual reads them: in double precision, or rounded to single ([`single_precision`]).
#[derive(Clone, Copy)]
enum Rows<'a> {
    Double(&'a [f64]),
    Single(&'a [f32]),
}

multiversion! {
    /// Solve one binary problem with labels ±1 (`signs`, one per trial) from the dual variables `alpha` (updated in
    /// place; all zero for a fresh start); returns `p` weights then the intercept, and whether the fit was still
    /// moving after `max_passes` passes.
    fn dual_cd(
        rows: Rows,
        p: usize,
        signs: &[f64],
        sq_norms: &[f64],
        c: f64,
        max_passes: usize,
        alpha: &mut [f64],
    ) -> (Vec<f64>, bool) {
        match rows {
            Rows::Double(x) => coordinate_descent(x, p, signs, sq_norms, c, max_passes, alpha),
            Rows::Single(x) => coordinate_descent(x, p, signs, sq_norms, c, max_passes, alpha),
        }
    }
}

/// [`dual_cd`] on rows of either precision: the weights and the row products are in the rows' precision, the dual
/// variables, gradients and stopping rule in double.
#[inline(always)]
fn coordinate_descent<T: Real>(
    x: &[T],
    p: usize,
    signs: &[f64],
    sq_norms: &[f64],
    c: f64,
    max_passes: usize,
    alpha: &mut [f64],
) -> (Vec<f64>, bool) {
    let n = signs.len();
    let diag = 0.5 / c;
    let qd: Vec<f64> = sq_norms.iter().map(|q| q + diag).collect();
    // w = Σ αᵢyᵢx̃ᵢ, trial by trial in order.
    let mut w = vec![T::ZERO; p + 1];
    for (i, row) in x.chunks_exact(p).enumerate() {
        if alpha[i] != 0.0 {
            let step = T::from_f64(alpha[i] * signs[i]);
            axpy(step, row, &mut w[..p]);
            w[p] += step;
        }
    }
    let finish = |w: Vec<T>, moving: bool| (w.into_iter().map(T::to_f64).collect(), moving);
    let mut index: Vec<usize> = (0..n).collect();
    let mut active = n;
    // With no upper bound on α (squared hinge), only the lower bound can be shrunk, so only the old maximum is kept.
    let mut pg_max_old = f64::INFINITY;
    let mut order = SplitMix64(0x005e_ed0f_d0a1);
    for _pass in 0..max_passes {
        if crate::stop::requested() {
            break;
        }
        let (mut pg_max, mut pg_min) = (f64::NEG_INFINITY, f64::INFINITY);
        for s in 0..active {
            // A draw below `active − s` by multiplying and keeping the high half (Lemire, ACM TOMACS 2019) rather
            // than a 64-bit remainder, a division that cost 3–8 % of small fits' time (248 × 100, 2026-12-04).
            // Without Lemire's rejection step the draw is biased by at most n/2⁶⁴, as the remainder was: harmless
            // for a visiting order.
            let j = s + ((u128::from(order.next()) * (active - s) as u128) >> 64) as usize;
            index.swap(s, j);
        }
        let mut s = 0;
        while s < active {
            let i = index[s];
            let xi = &x[i * p..(i + 1) * p];
            let yi = signs[i];
            let g = yi * (T::dot_rows(&w[..p], xi) + w[p]).to_f64() - 1.0 + alpha[i] * diag;
            let mut pg = 0.0;
            if alpha[i] == 0.0 {
                if g > pg_max_old {
                    // Shrinking: this coordinate is at its bound and likely to stay there.
                    active -= 1;
                    index.swap(s, active);
                    continue;
                } else if g < 0.0 {
                    pg = g;
                }
            } else {
                pg = g;
            }
            pg_max = pg_max.max(pg);
            pg_min = pg_min.min(pg);
            if pg.abs() > 1e-12 {
                let old = alpha[i];
                alpha[i] = (old - g / qd[i]).max(0.0);
                let step = T::from_f64((alpha[i] - old) * yi);
                axpy(step, xi, &mut w[..p]);
                w[p] += step;
            }
            s += 1;
        }
        if pg_max - pg_min <= TOLERANCE {
            if active == n {
                return finish(w, false);
            }
            // Converged on the shrunk set: check once more on every coordinate.
            active = n;
            pg_max_old = f64::INFINITY;
            continue;
        }
        pg_max_old = if pg_max <= 0.0 { f64::INFINITY } else { pg_max };
    }
    finish(w, true)
}

/// `X̃ᵀX̃` for x̃ = [x, 1] (q × q, q = p + 1): the Hessian term when every trial is inside the margin, as all are at
/// w = 0. Computed once per fit and shared by the one-vs-rest problems.
fn augmented_gram(x: &[f64], n: usize, p: usize) -> Vec<f64> {
    let q = p + 1;
    let g = super::linalg::gram(x, n, p);
    let mut out = vec![0.0; q * q];
    for a in 0..p {
        out[a * q..a * q + p].copy_from_slice(&g[a * p..(a + 1) * p]);
    }
    // The constant feature's row and column: column sums of x, and n.
    for row in x.chunks_exact(p) {
        for (a, v) in row.iter().enumerate() {
            out[a * q + p] += v;
        }
    }
    for a in 0..p {
        out[p * q + a] = out[a * q + p];
    }
    out[p * q + p] = n as f64;
    out
}

/// How each margin changes per unit step along `d`: `yᵢ d·x̃ᵢ`.
#[inline(always)]
fn step_margins(x: &[f64], n: usize, p: usize, signs: &[f64], d: &[f64]) -> Vec<f64> {
    let mut out = vec![0.0; n];
    for (i, (o, row)) in out.iter_mut().zip(x.chunks_exact(p)).enumerate() {
        *o = signs[i] * (dot_wide(&d[..p], row) + d[p]);
    }
    out
}

/// Bring `hess` (`2C·Σ x̃ᵢx̃ᵢᵀ` over the trials that were inside the margin when it was last brought up to date,
/// `synced`; upper triangle) to the trials `inside` now. The trials that entered and left since are added and
/// removed as two Gram matrices, by the blocked Gram kernel (several times faster per row than rank-one terms);
/// when they outnumber the trials inside, the matrix is formed again from those instead.
#[inline(always)]
fn bring_up_to_date(
    hess: &mut [f64],
    synced: &mut [bool],
    x: &[f64],
    p: usize,
    inside: &[bool],
    c: f64,
) {
    let q = p + 1;
    let rows_of = |keep: &dyn Fn(usize) -> bool| {
        let mut z = Vec::new();
        for (i, row) in x.chunks_exact(p).enumerate() {
            if keep(i) {
                z.extend_from_slice(row);
                z.push(1.0);
            }
        }
        z
    };
    let n_inside = inside.iter().filter(|&&b| b).count();
    let crossed = inside
        .iter()
        .zip(synced.iter())
        .filter(|(a, b)| a != b)
        .count();
    if crossed > n_inside {
        let g = gram(&rows_of(&|i| inside[i]), n_inside, q);
        for (h, v) in hess.iter_mut().zip(&g) {
            *h = 2.0 * c * v;
        }
    } else {
        let entered = rows_of(&|i| inside[i] && !synced[i]);
        let left = rows_of(&|i| !inside[i] && synced[i]);
        let (ge, gl) = (
            gram(&entered, entered.len() / q, q),
            gram(&left, left.len() / q, q),
        );
        for a in 0..q {
            for b in a..q {
                hess[a * q + b] += 2.0 * c * ge[a * q + b] - 2.0 * c * gl[a * q + b];
            }
        }
    }
    synced.copy_from_slice(inside);
}

/// Where the primal Newton method starts.
#[derive(Clone, Copy)]
enum Start<'a> {
    /// At w = 0, where every trial is inside the margin: the Hessian term is 2C times the fold's Gram matrix
    /// `X̃ᵀX̃` (`gram_all`), and `factor0` is the factor of the first step, both shared by the classes.
    Zero {
        gram_all: &'a [f64],
        factor0: &'a [f64],
    },
    /// At the weights where the dual stopped (`p` weights then the intercept); the first step forms the Hessian of
    /// the trials inside the margin there.
    From(&'a [f64]),
}

multiversion! {
    /// Minimise `½‖w̃‖² + C Σ max(0, 1 − yᵢ w̃·x̃ᵢ)²` in the primal (x̃ = [x, 1]); returns `p` weights then the
    /// intercept, and whether the step cap was hit. `single`: keep the Cholesky factor in single precision
    /// ([`single_precision`]).
    fn primal_newton(
        x: &[f64],
        n: usize,
        p: usize,
        signs: &[f64],
        c: f64,
        start: Start,
        single: bool,
    ) -> (Vec<f64>, bool) {
        if !single {
            return newton::<f64>(x, n, p, signs, c, start);
        }
        match newton::<f32>(x, n, p, signs, c, start) {
            // At the step cap, the single-precision factor's rounding may be what held the method back (every step
            // still descends, but the steps may shrink the gradient slowly): go on in double from where it stopped.
            (w, true) if !crate::stop::requested() => newton::<f64>(x, n, p, signs, c, Start::From(&w)),
            done => done,
        }
    }
}

/// [`primal_newton`] with the Cholesky factor kept in precision `F`.
///
/// The generalised Hessian `I + 2C Σ_{inside} x̃ᵢx̃ᵢᵀ` starts from the shared full Gram matrix. When few trials
/// cross the margin in a step, its Cholesky factor takes one rank-one update or downdate per crossing (O(q²) each)
/// and the matrix itself is left behind; it is brought up to date, by Gram products of the trials that entered and
/// left ([`bring_up_to_date`]), only when the factor must be made again (in double precision, then rounded to `F`).
/// The margins `mᵢ = yᵢ w̃·x̃ᵢ` are carried along the steps, so the line search costs O(n) per trial point.
#[inline(always)]
fn newton<F: Real>(
    x: &[f64],
    n: usize,
    p: usize,
    signs: &[f64],
    c: f64,
    start: Start,
) -> (Vec<f64>, bool) {
    let q = p + 1;
    // `2C·Σ x̃ᵢx̃ᵢᵀ` over the trials that were inside the margin at the last refactoring (`synced`): at w = 0
    // every trial; from the dual's weights none yet (the first step brings it up to date).
    let (mut w, mut hess_upper, mut synced, factor0) = match start {
        Start::Zero { gram_all, factor0 } => (
            vec![0.0; q],
            gram_all.iter().map(|g| 2.0 * c * g).collect::<Vec<f64>>(),
            vec![true; n],
            Some(factor0),
        ),
        Start::From(w0) => (w0.to_vec(), vec![0.0; q * q], vec![false; n], None),
    };
    let mut inside = synced.clone();
    // The stopping rule is relative to the gradient at w = 0 (every slack 1), wherever the method starts: from
    // w = 0 it is the first step's gradient, from the dual's weights it is formed here, with the margins there.
    let (mut margin, mut first_norm) = match factor0 {
        Some(_) => (vec![0.0; n], None),
        None => {
            let mut g0 = vec![0.0; q];
            for (row, &y) in x.chunks_exact(p).zip(signs) {
                axpy(-2.0 * c * y, row, &mut g0[..p]);
                g0[p] -= 2.0 * c * y;
            }
            (
                step_margins(x, n, p, signs, &w),
                Some(dot_wide(&g0, &g0).sqrt()),
            )
        }
    };
    // The factor of the current Hessian, once this problem has one of its own (step 0 from w = 0 uses the shared
    // `factor0`).
    let mut factor: Option<Vec<F>> = None;
    let root = (2.0 * c).sqrt();
    for _step in 0..MAX_NEWTON_STEPS {
        if crate::stop::requested() {
            break;
        }
        let mut grad = w.clone();
        let mut changed = Vec::new();
        for i in 0..n {
            let slack = 1.0 - margin[i];
            let now_inside = slack > 0.0;
            if now_inside != inside[i] {
                inside[i] = now_inside;
                changed.push(i);
            }
            if now_inside {
                axpy(
                    -2.0 * c * slack * signs[i],
                    &x[i * p..(i + 1) * p],
                    &mut grad[..p],
                );
                grad[p] -= 2.0 * c * slack * signs[i];
            }
        }
        // The Hessian matrix is only read when the factor is made again: it is brought up to date then.
        let norm = dot_wide(&grad, &grad).sqrt();
        let first = *first_norm.get_or_insert(norm);
        if norm <= NEWTON_TOLERANCE * first.max(1.0) {
            return (w, false);
        }
        let mut d: Vec<f64> = grad.iter().map(|g| -g).collect();
        if let (0, Some(factor0)) = (_step, factor0) {
            cholesky_solve(factor0, q, &mut d);
            let dm = step_margins(x, n, p, signs, &d);
            let t = exact_step(&w, &d, &margin, &dm, c);
            axpy(t, &d, &mut w);
            axpy(t, &dm, &mut margin);
            continue;
        }
        // Few trials crossed the margin: update the factor in O(q²) each instead of refactoring in O(q³).
        let mut u = factor.take().filter(|_| changed.len() * 8 <= q);
        if let Some(f) = u.as_mut() {
            for &i in &changed {
                let mut v: Vec<F> = x[i * p..(i + 1) * p]
                    .iter()
                    .map(|xv| F::from_f64(root * xv))
                    .collect();
                v.push(F::from_f64(root));
                let sign = F::from_f64(if inside[i] { 1.0 } else { -1.0 });
                if !cholesky_rank_one(f, q, &mut v, sign) {
                    u = None;
                    break;
                }
            }
        }
        // (Plain control flow, not closures: a closure would be compiled without the AVX2 of the caller's copy.)
        let l = match u {
            Some(l) => l,
            None => {
                bring_up_to_date(&mut hess_upper, &mut synced, x, p, &inside, c);
                let mut hess = hess_upper.clone();
                for a in 0..q {
                    hess[a * q + a] += 1.0;
                }
                // I + (positive semi-definite) is positive definite; the ridge fallback is for round-off only.
                let l = match cholesky_owned(hess.clone(), q) {
                    Some(l) => l,
                    None => cholesky_with_ridge(&hess, q).0,
                };
                l.into_iter().map(F::from_f64).collect()
            }
        };
        cholesky_solve(&l, q, &mut d);
        factor = Some(l);
        let dm = step_margins(x, n, p, signs, &d);
        let t = exact_step(&w, &d, &margin, &dm, c);
        axpy(t, &d, &mut w);
        axpy(t, &dm, &mut margin);
    }
    (w, true)
}

/// Minimiser over t of the piecewise-quadratic `f(w + t·d)`, by Newton's method on its piecewise-linear derivative
/// (exact once the set of trials inside the margin stops changing), starting from the full Newton step t = 1.
#[inline(always)]
fn exact_step(w: &[f64], d: &[f64], margin: &[f64], dm: &[f64], c: f64) -> f64 {
    let (wd, dd) = (dot_wide(w, d), dot_wide(d, d));
    let mut t = 1.0;
    for _ in 0..50 {
        let (mut slope, mut curvature) = (t * dd + wd, dd);
        for (m, g) in margin.iter().zip(dm) {
            let slack = 1.0 - m - t * g;
            if slack > 0.0 {
                slope -= 2.0 * c * slack * g;
                curvature += 2.0 * c * g * g;
            }
        }
        let next = t - slope / curvature;
        if (next - t).abs() <= 1e-12 * t.abs().max(1.0) {
            return next;
        }
        t = next;
    }
    t
}

/// SplitMix64 (Steele, Lea & Flood, 2014): a tiny fixed generator for the coordinate order.
struct SplitMix64(u64);

impl SplitMix64 {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn separates_two_points_symmetrically() {
        // Points −1 and +1 on one feature: by symmetry the boundary is at 0.
        let svm = LinearSvm { c: 10.0 };
        let m = svm.fit(&[-1.0, 1.0], 2, 1, &[0, 1], 2);
        assert_eq!(m.predict(&[-0.1, 0.1, -5.0, 5.0]), vec![0, 1, 0, 1]);
        assert!(!m.hit_iteration_cap());
    }

    #[test]
    fn one_vs_rest_on_three_clusters() {
        let x = [
            -3.0, 0.0, -2.8, 0.2, 3.0, 0.0, 2.9, -0.1, 0.0, 3.0, 0.1, 2.9,
        ];
        let y = [0, 0, 1, 1, 2, 2];
        let m = LinearSvm { c: 1.0 }.fit(&x, 6, 2, &y, 3);
        assert_eq!(m.predict(&[-3.0, 0.1, 3.1, 0.0, 0.0, 3.2]), vec![0, 1, 2]);
    }

    /// Invented trials of `p` standard normal features, with labels ±1 that follow feature 0 weakly.
    fn weakly_labelled(n: usize, p: usize, seed: u64) -> (Vec<f64>, Vec<f64>) {
        use crate::rng::{normal, task_rng, Stream};
        let mut rng = task_rng(seed, Stream::Simulation, 99, 0);
        let x: Vec<f64> = (0..n * p).map(|_| normal(&mut rng)).collect();
        let signs = (0..n)
            .map(|i| {
                if 0.3 * x[i * p] + normal(&mut rng) > 0.0 {
                    1.0
                } else {
                    -1.0
                }
            })
            .collect();
        (x, signs)
    }

    /// The primal Newton method's optimum from w = 0.
    fn primal_from_zero(x: &[f64], n: usize, p: usize, signs: &[f64], c: f64) -> Vec<f64> {
        let gram_all = augmented_gram(x, n, p);
        let mut h0: Vec<f64> = gram_all.iter().map(|g| 2.0 * c * g).collect();
        for a in 0..=p {
            h0[a * (p + 1) + a] += 1.0;
        }
        let factor0 = cholesky_with_ridge(&h0, p + 1).0;
        let start = Start::Zero {
            gram_all: &gram_all,
            factor0: &factor0,
        };
        let (w, capped) = primal_newton(x, n, p, signs, c, start, false);
        assert!(!capped);
        w
    }

    /// Starting the primal where `passes` of the dual stopped reaches the optimum it reaches from w = 0 (the
    /// objective is strictly convex), without hitting a cap; in double precision and in single (the dual's passes
    /// on rows rounded to single precision, the Newton method's factor in single precision).
    fn assert_hand_over_reaches_the_optimum(n: usize, p: usize, seed: u64, passes: usize) {
        let c = 1.0;
        let (x, signs) = weakly_labelled(n, p, seed);
        let sq: Vec<f64> = x.chunks_exact(p).map(|r| dot_wide(r, r) + 1.0).collect();
        assert!(single_precision(&sq, c));
        let cold = primal_from_zero(&x, n, p, &signs, c);
        let scale = cold.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let x32: Vec<f32> = x.iter().map(|&v| v as f32).collect();
        for single in [false, true] {
            let rows = if single {
                Rows::Single(&x32)
            } else {
                Rows::Double(&x)
            };
            let mut alpha = vec![0.0; n];
            let (from_dual, moving) = dual_cd(rows, p, &signs, &sq, c, passes, &mut alpha);
            assert!(moving, "this problem must exercise the hand-over");
            let start = Start::From(&from_dual);
            let (finished, capped) = primal_newton(&x, n, p, &signs, c, start, single);
            assert!(!capped);
            for (a, b) in finished.iter().zip(&cold) {
                assert!(
                    (a - b).abs() <= 1e-6 * scale,
                    "single {single}: {a} against {b}"
                );
            }
        }
        // The decoder is not flagged as capped.
        let y: Vec<usize> = signs.iter().map(|&s| usize::from(s > 0.0)).collect();
        let model = LinearSvm { c }.fit(&x, n, p, &y, 2);
        assert!(!model.hit_iteration_cap());
    }

    /// Single precision is used where the Hessian's condition number is bounded well enough
    /// (`SINGLE_PRECISION_LIMIT`): standardised features at the grid's largest shape and C = 1, not at C = 10 nor
    /// on raw counts of tens of spikes.
    #[test]
    fn single_precision_only_where_the_bound_allows() {
        let standardised = vec![1001.0; 3200];
        assert!(single_precision(&standardised, 1.0));
        assert!(!single_precision(&standardised, 10.0));
        // 200 neurons firing about 20 spikes a trial: ‖x‖² ≈ 200 · 400.
        assert!(!single_precision(&vec![80_001.0; 200], 1.0));
        assert!(!single_precision(&[f64::INFINITY], 1.0));
    }

    /// A dual fit that meets the stopping rule in single precision is finished in double from the same α, where it
    /// meets the rule again, and its weights are as near the optimum as those of the fit done in double precision
    /// throughout.
    #[test]
    fn a_dual_fit_in_single_precision_meets_the_rule_in_double() {
        let (n, p, c) = (100, 80, 1.0);
        let (x, signs) = weakly_labelled(n, p, 3);
        let sq: Vec<f64> = x.chunks_exact(p).map(|r| dot_wide(r, r) + 1.0).collect();
        let x32: Vec<f32> = x.iter().map(|&v| v as f32).collect();
        let mut alpha = vec![0.0; n];
        let (_, moving) = dual_cd(
            Rows::Single(&x32),
            p,
            &signs,
            &sq,
            c,
            HANDOVER_PASSES,
            &mut alpha,
        );
        assert!(!moving, "this problem must converge in the dual");
        let (w, moving) = dual_cd(
            Rows::Double(&x),
            p,
            &signs,
            &sq,
            c,
            HANDOVER_PASSES,
            &mut alpha,
        );
        assert!(!moving);
        let mut zero = vec![0.0; n];
        let (w_double, _) = dual_cd(
            Rows::Double(&x),
            p,
            &signs,
            &sq,
            c,
            HANDOVER_PASSES,
            &mut zero,
        );
        let optimum = primal_from_zero(&x, n, p, &signs, c);
        let scale = optimum.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let off = |v: &[f64]| {
            (0..=p)
                .map(|k| (v[k] - optimum[k]).abs())
                .fold(0.0, f64::max)
                / scale
        };
        // Measured: 2.1e-3 of the largest weight for both.
        let (single, double) = (off(&w), off(&w_double));
        assert!(
            single <= 1e-2 && single <= 2.0 * double,
            "{single:e} against {double:e}"
        );
    }

    /// Two trials per feature and labels nearly unrelated to the activity (a shuffle's fit): the dual is still
    /// moving after its passes and the primal finishes it.
    #[test]
    fn a_dual_still_moving_is_finished_by_the_primal() {
        assert_eq!(dual_passes(200, 100), HANDOVER_PASSES);
        assert!(dual_route(303, 100) && !dual_route(304, 100));
        assert_hand_over_reaches_the_optimum(200, 100, 7, HANDOVER_PASSES);
    }

    /// A short run of the dual that meets its own, looser rule is still finished by the primal Newton method: the
    /// fit returns the primal's optimum (to 1e-6), not the dual's stopping point (about 1e-3 from it).
    #[test]
    fn a_short_dual_that_met_its_rule_is_still_finished_by_the_primal() {
        let (n, p, c) = (800, 199, 1.0);
        assert_eq!(dual_passes(n, p), SHORT_DUAL_PASSES);
        let (mut x, signs) = weakly_labelled(n, p, 11);
        // Well apart along feature 0, so that the dual meets its rule within its short run.
        for i in 0..n {
            x[i * p] = 3.0 * signs[i] + 0.1 * x[i * p];
        }
        let sq: Vec<f64> = x.chunks_exact(p).map(|r| dot_wide(r, r) + 1.0).collect();
        let mut alpha = vec![0.0; n];
        let (dual_w, moving) = dual_cd(
            Rows::Double(&x),
            p,
            &signs,
            &sq,
            c,
            SHORT_DUAL_PASSES,
            &mut alpha,
        );
        assert!(
            !moving,
            "this problem must meet the dual's rule within the short run"
        );
        let optimum = primal_from_zero(&x, n, p, &signs, c);
        let scale = optimum.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let off = |w: &[f64]| {
            w.iter()
                .zip(&optimum)
                .map(|(a, b)| (a - b).abs())
                .fold(0.0, f64::max)
                / scale
        };
        assert!(
            off(&dual_w) > 1e-5,
            "the dual's stopping point must differ: {:e}",
            off(&dual_w)
        );
        let y: Vec<usize> = signs.iter().map(|&s| usize::from(s > 0.0)).collect();
        let model = LinearSvm { c }.fit(&x, n, p, &y, 2);
        let weights = model.weights().expect("a linear model");
        assert!(off(&weights[0].1) <= 1e-6, "{:e}", off(&weights[0].1));
    }

    /// Four trials per feature, 200 features: the primal starts where a short run of the dual stopped.
    #[test]
    fn the_primal_after_a_short_dual_reaches_the_optimum() {
        assert_eq!(dual_passes(800, 199), SHORT_DUAL_PASSES);
        assert_eq!(dual_passes(901, 199), 0);
        assert_eq!(dual_passes(600, 199), HANDOVER_PASSES);
        // Few features: the primal from w = 0.
        assert_eq!(dual_passes(400, 99), 0);
        assert_hand_over_reaches_the_optimum(800, 199, 8, SHORT_DUAL_PASSES);
    }

    /// Many features at just over three trials per feature: more passes of the dual, then the primal.
    #[test]
    fn the_primal_after_a_longer_dual_reaches_the_optimum() {
        assert_eq!(dual_passes(2000, 599), WIDE_DUAL_PASSES);
        assert_eq!(dual_passes(2101, 599), SHORT_DUAL_PASSES);
        assert_eq!(dual_passes(2000, 598), SHORT_DUAL_PASSES);
        assert_hand_over_reaches_the_optimum(2000, 599, 9, WIDE_DUAL_PASSES);
    }

    #[test]
    fn never_predicts_an_absent_class() {
        let m = LinearSvm { c: 1.0 }.fit(&[-1.0, 1.0, 2.0], 3, 1, &[0, 2, 2], 3);
        assert!(m.predict(&[-9.0, 0.0, 9.0]).iter().all(|&c| c != 1));
    }
}
