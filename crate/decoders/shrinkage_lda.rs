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
//!
//! **Every fold of a split at once.** Everything above is a function of per-class sums over training trials: the
//! count, the sum of the rows, the scatter `Σ xxᵀ`, and (for the shrinkage weight) `Σ (|zᵢ|²)²`, one pass. So the
//! count, sum and scatter of each (fold, class) are computed once per split, and the training statistics of fold f
//! are the class totals minus fold f's share: one Gram matrix over all trials per split instead of one per fold.
//! (When the shares would take too much memory, the totals and only as many folds' shares as fit are kept; each other
//! fold's share is formed again as the fold is fitted: part of a second pass over the rows, the same numbers.)
//! Step 1 makes the decoder exactly invariant to shifting and scaling each feature (the class SDs scale with the
//! feature), so the standardisation the pipeline would apply changes nothing but rounding and is left out: the fold
//! engine works on the raw values, after removing one offset per feature (the mean of the split's rows) so that the
//! scatter sums do not lose digits to a large mean. The offset cancels exactly in the algebra; it only conditions the
//! arithmetic.
//!
//! **Fewer trials than features.** The pooled covariance is a diagonal plus one low-rank term per class,
//! `Σ = D + Σₖ aₖ ZₖᵀZₖ` (Zₖ the class's centred training rows), so when the training trials are few beside the
//! features it is solved through the Woodbury identity on an n × n system instead of factoring p × p
//! ([`low_rank_fit`]); the shrinkage weights come from each class's n × n Gram matrix, since ‖ZᵀZ‖_F = ‖ZZᵀ‖_F. The
//! route is chosen per split by the cost of each ([`low_rank_is_cheaper`]); both give the same model up to rounding.

use super::linalg::{
    axpy, cholesky, cholesky_solve, cholesky_with_ridge, dot, gram, gram_upper_only,
};
use super::{argmax, present_classes, Decoder, FoldSet, Model};

pub struct ShrinkageLda;

/// Most values the kept per-(fold, class) scatters of the fold shortcut may hold (8 Mi doubles, 64 MiB).
const MAX_SHARE_VALUES: usize = 8 << 20;

struct LdaModel {
    classes: Vec<usize>,
    /// Row per present class: `p` coefficients.
    coef: Vec<Vec<f64>>,
    intercept: Vec<f64>,
}

impl Decoder for ShrinkageLda {
    fn fit(&self, x: &[f64], n: usize, p: usize, y: &[usize], n_classes: usize) -> Box<dyn Model> {
        let all = vec![0; n];
        let set = FoldSet {
            x,
            p,
            y,
            fold: &all,
            folds: 1,
            n_classes,
        };
        if low_rank_is_cheaper(n, p, 1, true) {
            let (offset, shifted) = shift(&set);
            if let Some(model) = low_rank_fit(&set, &offset, &shifted, None) {
                return Box::new(model);
            }
        }
        let sums = FoldSums::of(&set, &[]);
        Box::new(sums.fit(&set, None))
    }

    fn fit_folds_raw(&self, set: &FoldSet, wanted: &[bool]) -> Option<Vec<Option<Box<dyn Model>>>> {
        let n = set.y.len();
        // Keeping one scatter per (fold, class) can take more memory than a browser tab should spend (five folds of
        // four classes at 1000 neurons: 80 MB as packed upper triangles). Past that, the shares of the first wanted
        // folds that fit are kept and each other fold's share is formed again when the fold is fitted, part of a
        // second pass over the split's rows: still less than fitting each fold on its own (folds − 1 passes) from
        // four folds on; with two or three folds those plain fits are as cheap.
        let per_fold = (set.n_classes * set.p * (set.p + 1) / 2).max(1);
        let wanted_folds = wanted.iter().filter(|&&w| w).count();
        let kept_folds = (MAX_SHARE_VALUES / per_fold).min(wanted_folds);
        let all_kept = kept_folds == wanted_folds;
        if low_rank_is_cheaper(n - n / set.folds.max(1), set.p, set.folds, all_kept) {
            let (offset, shifted) = shift(set);
            let mut models = Vec::with_capacity(set.folds);
            for (f, &want) in wanted.iter().enumerate() {
                if !want {
                    models.push(None);
                    continue;
                }
                // A diagonal with a zero (no class shrunk) has no Woodbury form: the whole split goes the other way.
                let model = low_rank_fit(set, &offset, &shifted, Some(f))?;
                models.push(Some(Box::new(model) as Box<dyn Model>));
            }
            return Some(models);
        }
        if !all_kept && set.folds < 4 {
            return None;
        }
        let mut budget = kept_folds;
        let keep: Vec<bool> = wanted
            .iter()
            .map(|&w| {
                let k = w && budget > 0;
                budget -= usize::from(k);
                k
            })
            .collect();
        let sums = FoldSums::of(set, &keep);
        Some(
            (0..set.folds)
                .map(|f| wanted[f].then(|| Box::new(sums.fit(set, Some(f))) as Box<dyn Model>))
                .collect(),
        )
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

    fn weights(&self) -> Option<Vec<(usize, Vec<f64>)>> {
        Some(
            self.classes
                .iter()
                .copied()
                .zip(self.coef.clone())
                .collect(),
        )
    }

    fn decision(&self, x: &[f64]) -> Vec<f64> {
        let p = self.coef[0].len();
        x.chunks_exact(p)
            .map(|row| {
                let score = |k: usize| dot(&self.coef[k], row) + self.intercept[k];
                super::two_class_margin(&[score(0), score(1)])
            })
            .collect()
    }
}

/// Count, sum of rows and scatter `Σ xxᵀ` (rows shifted by `offset`; upper triangle only) of one group of trials.
struct Sums {
    n: usize,
    sum: Vec<f64>,
    /// Row-major p × p, or (`packed`) the upper triangle's rows one after another, p(p + 1)/2 values.
    scatter: Vec<f64>,
    packed: bool,
}

impl Sums {
    /// Row `i` of the scatter's upper triangle: columns `i..p`.
    fn upper_row(&self, i: usize, p: usize) -> &[f64] {
        if self.packed {
            // Rows 0..i hold p + (p − 1) + … + (p − i + 1) values.
            let start = i * p - i * i.saturating_sub(1) / 2;
            &self.scatter[start..start + p - i]
        } else {
            &self.scatter[i * p + i..(i + 1) * p]
        }
    }

    /// Keep the upper triangle only, packed (half the memory of a kept share).
    fn pack(mut self, p: usize) -> Sums {
        if !self.packed && !self.scatter.is_empty() {
            let mut packed = Vec::with_capacity(p * (p + 1) / 2);
            for i in 0..p {
                packed.extend_from_slice(&self.scatter[i * p + i..(i + 1) * p]);
            }
            self.scatter = packed;
            self.packed = true;
        }
        self
    }
}

/// Per-class totals over the split and per-(fold, class) shares.
struct FoldSums {
    offset: Vec<f64>,
    /// Row-major shifted copy of the split's rows.
    shifted: Vec<f64>,
    total: Vec<Sums>,
    /// `[fold][class]` for the folds whose shares are kept, `None` for the others (and empty for a plain fit).
    share: Vec<Option<Vec<Sums>>>,
}

/// Count, sum and scatter of the rows at `rows` of `shifted` (p values per row).
fn sums_of(shifted: &[f64], rows: &[usize], p: usize) -> Sums {
    if rows.is_empty() {
        return Sums {
            n: 0,
            sum: Vec::new(),
            scatter: Vec::new(),
            packed: false,
        };
    }
    let mut z = Vec::with_capacity(rows.len() * p);
    let mut sum = vec![0.0; p];
    for &i in rows {
        let r = &shifted[i * p..(i + 1) * p];
        z.extend_from_slice(r);
        for (s, v) in sum.iter_mut().zip(r) {
            *s += v;
        }
    }
    Sums {
        n: rows.len(),
        sum,
        scatter: gram_upper_only(&z, rows.len(), p),
        packed: false,
    }
}

impl FoldSums {
    /// The class totals of a split, and the (fold, class) shares of the folds `f` with `keep[f]` ([`FoldSums::fit`]
    /// forms the share of any other fold it fits again, identically).
    fn of(set: &FoldSet, keep: &[bool]) -> FoldSums {
        let (p, n) = (set.p, set.y.len());
        let (offset, shifted) = shift(set);
        let members = |wanted: &dyn Fn(usize) -> bool, k: usize| -> Vec<usize> {
            (0..n).filter(|&i| set.y[i] == k && wanted(i)).collect()
        };
        if set.folds == 1 {
            let total = (0..set.n_classes)
                .map(|k| sums_of(&shifted, &members(&|_| true, k), p))
                .collect();
            return FoldSums {
                offset,
                shifted,
                total,
                share: Vec::new(),
            };
        }
        // Totals as the sum of the shares, in fold order (so whether shares are kept changes no number).
        let mut total: Vec<Sums> = (0..set.n_classes)
            .map(|_| Sums {
                n: 0,
                sum: vec![0.0; p],
                scatter: vec![0.0; p * p],
                packed: false,
            })
            .collect();
        let mut share = Vec::new();
        for f in 0..set.folds {
            let kept = keep.get(f) == Some(&true);
            let mut fold = Vec::new();
            for (k, t) in total.iter_mut().enumerate() {
                let s = sums_of(&shifted, &members(&|i| set.fold[i] == f, k), p);
                if s.n > 0 {
                    t.n += s.n;
                    add(&mut t.sum, &s.sum);
                    add_upper(&mut t.scatter, &s.scatter, p);
                }
                if kept {
                    fold.push(s.pack(p));
                }
            }
            share.push(kept.then_some(fold));
        }
        FoldSums {
            offset,
            shifted,
            total,
            share,
        }
    }

    /// The model trained on every trial outside fold `left_out` (every trial when `None`), on raw rows.
    ///
    /// Only upper triangles are formed (the Cholesky factorisation reads no more), in one reused buffer, and the
    /// scaling of step 1 is folded into the sums: the scaled-back shrunk covariance is `(1 − s)·C/n` off the diagonal
    /// and `(1 − s)·var + s·μ·var` on it, so only the shrinkage weight needs the unit-SD statistics.
    fn fit(&self, set: &FoldSet, left_out: Option<usize>) -> LdaModel {
        let p = set.p;
        let in_training = |i: usize| left_out.is_none_or(|f| set.fold[i] != f);
        let train: Vec<usize> = (0..set.y.len()).filter(|&i| in_training(i)).collect();
        let classes = present_classes(
            &train.iter().map(|&i| set.y[i]).collect::<Vec<_>>(),
            set.n_classes,
        );
        let mut pooled = vec![0.0; p * p];
        let mut c = vec![0.0; p * p];
        let mut means = Vec::with_capacity(classes.len());
        let mut priors = Vec::with_capacity(classes.len());
        for &k in &classes {
            let t = &self.total[k];
            let formed;
            let share = match left_out {
                None => None,
                Some(f) if self.share.get(f).is_some_and(Option::is_some) => {
                    self.share[f].as_ref().map(|fold| &fold[k])
                }
                Some(f) => {
                    let rows: Vec<usize> = (0..set.y.len())
                        .filter(|&i| set.y[i] == k && set.fold[i] == f)
                        .collect();
                    formed = sums_of(&self.shifted, &rows, p);
                    Some(&formed)
                }
            }
            .filter(|s| s.n > 0);
            let n = t.n - share.map_or(0, |s| s.n);
            let nf = n as f64;
            let mean: Vec<f64> = match share {
                None => t.sum.iter().map(|v| v / nf).collect(),
                Some(s) => t
                    .sum
                    .iter()
                    .zip(&s.sum)
                    .map(|(a, b)| (a - b) / nf)
                    .collect(),
            };
            // Upper triangle of the centred scatter C = Σ xxᵀ − n μμᵀ over the training trials of the class.
            for i in 0..p {
                let range = i * p + i..(i + 1) * p;
                let (out, total) = (&mut c[range.clone()], &t.scatter[range.clone()]);
                let m = nf * mean[i];
                match share {
                    None => {
                        for ((o, a), mj) in out.iter_mut().zip(total).zip(&mean[i..]) {
                            *o = a - m * mj;
                        }
                    }
                    Some(s) => {
                        let part = s.upper_row(i, p);
                        for (((o, a), b), mj) in out.iter_mut().zip(total).zip(part).zip(&mean[i..])
                        {
                            *o = (a - b) - m * mj;
                        }
                    }
                }
            }
            let rows: Vec<usize> = train.iter().copied().filter(|&i| set.y[i] == k).collect();
            let (s, mu, var, constant) =
                class_shrinkage(&c, &self.shifted, &rows, &mean, p, &t.scatter);
            let prior = nf / train.len() as f64;
            let off = prior * (1.0 - s) / nf;
            // 0 for a constant feature, else 1: multiplying keeps the loop free of branches.
            let keep: Vec<f64> = constant
                .iter()
                .map(|&k| if k { 0.0 } else { 1.0 })
                .collect();
            for i in 0..p {
                let row = &mut pooled[i * p + i..(i + 1) * p];
                let diagonal = row[0]
                    + prior
                        * if constant[i] {
                            s * mu
                        } else {
                            (1.0 - s) * var[i] + s * mu * var[i]
                        };
                let a = off * keep[i];
                for ((acc, v), kj) in row
                    .iter_mut()
                    .zip(&c[i * p + i..(i + 1) * p])
                    .zip(&keep[i..])
                {
                    *acc += a * v * kj;
                }
                row[0] = diagonal;
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
            // The means are in shifted coordinates: move the offset into the intercept so raw rows can be scored.
            intercept.push(-0.5 * dot(mean, &w) + libm::log(*prior) - dot(&self.offset, &w));
            coef.push(w);
        }
        LdaModel {
            classes,
            coef,
            intercept,
        }
    }
}

/// One offset per feature (the mean of the split's rows) and the rows shifted by it, row-major.
fn shift(set: &FoldSet) -> (Vec<f64>, Vec<f64>) {
    let (p, n) = (set.p, set.y.len());
    let mut offset = vec![0.0; p];
    for row in set.x.chunks_exact(p) {
        for (o, v) in offset.iter_mut().zip(row) {
            *o += v;
        }
    }
    for o in &mut offset {
        *o /= n as f64;
    }
    let shifted = set
        .x
        .chunks_exact(p)
        .flat_map(|row| row.iter().zip(&offset).map(|(v, o)| v - o))
        .collect();
    (offset, shifted)
}

/// Whether the Woodbury route costs less than the p × p one for `n` training trials, `p` features and a split of
/// `folds` folds, in multiply–adds: per fit, the n × n Gram matrices (the pooled one and the classes', at most
/// n²p together) and an n × n Cholesky factor, against a p × p factor plus the split's scatters shared by its
/// folds (np² per split, once the per-fold shares are summed).
///
/// When not every wanted fold's shares are `kept` (see [`FoldSums::of`]), the scatters take (part of) a second
/// pass, and the p × p route's count is that of two whole passes, raised by half again: measured at 1000 trials ×
/// 1000 neurons (5 folds, 4 classes, no share kept), the count favoured the p × p route (6.5 × 10⁸ against
/// 8.1 × 10⁸) but it took 3.6–4.0 s against the Woodbury route's 3.2–3.3 s (its per-class passes over p × p
/// matrices are not counted); with two folds' shares kept, 1.55–1.87 s against 1.27–1.52 s (2026-12-03, 5 repeats),
/// so the count of no share kept still chooses there. At 4000 × 1000 the counts are ten times apart.
fn low_rank_is_cheaper(n: usize, p: usize, folds: usize, kept: bool) -> bool {
    let (n, p) = (n as f64, p as f64);
    let low_rank = n * n * p + n * n * n / 3.0;
    let full = p * p * p / 3.0 + n * p * p / folds as f64;
    if kept {
        low_rank < full
    } else {
        low_rank < 1.5 * (p * p * p / 3.0 + 2.0 * n * p * p / folds as f64)
    }
}

/// The model trained on every trial outside fold `left_out` by the Woodbury identity: `Σ = D + VᵀV` scaled
/// (`V` = the classes' centred rows, each class's weighted by `√aₖ`, over `√D`), so `Σ⁻¹b = D^-½ (I − VᵀM⁻¹V) D^-½ b`
/// with `M = I + VVᵀ`, n × n and never worse conditioned than I. `None` when a diagonal element of D is not
/// positive (no class was shrunk): the caller then forms Σ itself.
fn low_rank_fit(
    set: &FoldSet,
    offset: &[f64],
    shifted: &[f64],
    left_out: Option<usize>,
) -> Option<LdaModel> {
    let p = set.p;
    let train: Vec<usize> = (0..set.y.len())
        .filter(|&i| left_out.is_none_or(|f| set.fold[i] != f))
        .collect();
    let classes = present_classes(
        &train.iter().map(|&i| set.y[i]).collect::<Vec<_>>(),
        set.n_classes,
    );
    let n = train.len();
    let mut d = vec![0.0; p];
    // Vᵀ before scaling by D^-½, row-major p × n: column r is training row r (class by class) centred on its
    // class mean, constant features zeroed, times √aₖ.
    let mut vt = vec![0.0; p * n];
    let mut column = 0;
    let mut means = Vec::with_capacity(classes.len());
    let mut priors = Vec::with_capacity(classes.len());
    for &k in &classes {
        let rows: Vec<usize> = train.iter().copied().filter(|&i| set.y[i] == k).collect();
        let nk = rows.len();
        let nf = nk as f64;
        let mut mean = vec![0.0; p];
        for &r in &rows {
            for (m, v) in mean.iter_mut().zip(&shifted[r * p..(r + 1) * p]) {
                *m += v;
            }
        }
        for m in &mut mean {
            *m /= nf;
        }
        // Centred rows (nk × p), their per-feature variance and second moment about the split's offset.
        let mut z = Vec::with_capacity(nk * p);
        let (mut var, mut raw) = (vec![0.0; p], vec![0.0; p]);
        for &r in &rows {
            let row = &shifted[r * p..(r + 1) * p];
            for i in 0..p {
                let c = row[i] - mean[i];
                z.push(c);
                var[i] += c * c;
                raw[i] += row[i] * row[i];
            }
        }
        for v in &mut var {
            *v /= nf;
        }
        let (constant, inv) = unit_scale(&var, &raw, nf);
        // The Ledoit–Wolf statistics from the n × n Gram matrix G of the unit-SD rows: tr S = tr G / n,
        // Σᵢⱼ Sᵢⱼ² = ‖G‖²_F / n², Σₙ (|zₙ|²)² = Σ Gₙₙ².
        let mut unit_t = vec![0.0; p * nk];
        for (a, row) in z.chunks_exact(p).enumerate() {
            for i in 0..p {
                unit_t[i * nk + a] = row[i] * inv[i];
            }
        }
        let g = gram(&unit_t, p, nk);
        let trace = (0..nk).map(|a| g[a * nk + a]).sum::<f64>() / nf;
        let delta_sum = g.iter().map(|v| v * v).sum::<f64>() / (nf * nf);
        let beta_sum = (0..nk).map(|a| g[a * nk + a] * g[a * nk + a]).sum::<f64>();
        let s = shrinkage(nk, p, trace, delta_sum, beta_sum);
        let mu = trace / p as f64;
        let prior = nf / n as f64;
        let scale = (prior * (1.0 - s) / nf).sqrt();
        for i in 0..p {
            d[i] += prior * if constant[i] { s * mu } else { s * mu * var[i] };
        }
        for (a, row) in z.chunks_exact(p).enumerate() {
            for i in 0..p {
                if !constant[i] {
                    vt[i * n + column + a] = scale * row[i];
                }
            }
        }
        column += nk;
        means.push(mean);
        priors.push(prior);
    }
    // D must be safely positive for the identity; relative to its largest element, as Σ's scale is the data's.
    let largest = d.iter().fold(0.0_f64, |m, &v| m.max(v));
    let safe = largest > 0.0 && d.iter().all(|&v| v > 1e-12 * largest);
    if !safe {
        return None;
    }
    let root: Vec<f64> = d.iter().map(|v| 1.0 / v.sqrt()).collect();
    for (i, r) in root.iter().enumerate() {
        for v in &mut vt[i * n..(i + 1) * n] {
            *v *= r;
        }
    }
    let mut m = gram(&vt, p, n);
    for a in 0..n {
        m[a * n + a] += 1.0;
    }
    let l = cholesky(&m, n)?;
    let mut coef = Vec::with_capacity(classes.len());
    let mut intercept = Vec::with_capacity(classes.len());
    for (mean, prior) in means.iter().zip(&priors) {
        let y: Vec<f64> = mean.iter().zip(&root).map(|(b, r)| b * r).collect();
        let mut t = vec![0.0; n];
        for (i, yi) in y.iter().enumerate() {
            axpy(*yi, &vt[i * n..(i + 1) * n], &mut t);
        }
        cholesky_solve(&l, n, &mut t);
        let w: Vec<f64> = (0..p)
            .map(|i| root[i] * (y[i] - dot(&vt[i * n..(i + 1) * n], &t)))
            .collect();
        intercept.push(-0.5 * dot(mean, &w) + libm::log(*prior) - dot(offset, &w));
        coef.push(w);
    }
    Some(LdaModel {
        classes,
        coef,
        intercept,
    })
}

fn add(total: &mut [f64], part: &[f64]) {
    for (t, v) in total.iter_mut().zip(part) {
        *t += v;
    }
}

/// [`add`] over the upper triangles of two p × p matrices (all the scatters hold).
fn add_upper(total: &mut [f64], part: &[f64], p: usize) {
    for i in 0..p {
        let row = i * p + i..(i + 1) * p;
        add(&mut total[row.clone()], &part[row]);
    }
}

/// The Ledoit–Wolf weight of one class (step 1: its covariance on unit-SD features), from the upper triangle of
/// its centred scatter `c`. Returns the weight, the target's scale μ (mean unit-SD variance), each feature's
/// variance, and which features are constant in the class. `rows` index the class's training rows in `shifted`;
/// `raw_scatter` (the class's scatter about the split's offset) tells round-off from real variance.
fn class_shrinkage(
    c: &[f64],
    shifted: &[f64],
    rows: &[usize],
    mean: &[f64],
    p: usize,
    raw_scatter: &[f64],
) -> (f64, f64, Vec<f64>, Vec<bool>) {
    let n = rows.len() as f64;
    let var: Vec<f64> = (0..p).map(|i| c[i * p + i] / n).collect();
    let raw: Vec<f64> = (0..p).map(|i| raw_scatter[i * p + i]).collect();
    let (constant, inv) = unit_scale(&var, &raw, n);
    // S = ZᵀZ/n of the unit-SD data: tr S and Σᵢⱼ Sᵢⱼ² (off-diagonal terms twice).
    let (mut trace, mut delta_sum) = (0.0, 0.0);
    for i in 0..p {
        let row = &c[i * p + i..(i + 1) * p];
        let d = row[0] * inv[i] * inv[i] / n;
        trace += d;
        delta_sum += d * d;
        let a = inv[i] / n;
        let mut off = 0.0;
        for (v, ij) in row.iter().zip(&inv[i..]).skip(1) {
            let sij = v * a * ij;
            off += sij * sij;
        }
        delta_sum += 2.0 * off;
    }
    // Σₙ (|zₙ|²)², one pass over the rows.
    let beta_sum: f64 = rows
        .iter()
        .map(|&r| {
            let row = &shifted[r * p..(r + 1) * p];
            let sq: f64 = (0..p)
                .map(|i| {
                    let z = (row[i] - mean[i]) * inv[i];
                    z * z
                })
                .sum();
            sq * sq
        })
        .sum();
    let s = shrinkage(rows.len(), p, trace, delta_sum, beta_sum);
    (s, trace / p as f64, var, constant)
}

/// Which features are constant in a class of `n` trials, and `1/SD` of the others (0 for constant ones), from each
/// feature's variance and its second moment `raw` about the split's offset (summed over the class's trials).
///
/// The zero-variance rule of scikit-learn's StandardScaler (scale below 10 machine epsilons → 1). Computed from sums,
/// a constant feature's variance is round-off rather than 0, so it counts as constant when it is below 1e-9 of the
/// feature's second moment about the split's offset; such a feature is 0 after centring, as it would be if it were
/// centred directly.
fn unit_scale(var: &[f64], raw: &[f64], n: f64) -> (Vec<bool>, Vec<f64>) {
    let constant: Vec<bool> = var
        .iter()
        .zip(raw)
        .map(|(&v, &r)| v <= 1e-9 * r / n || v.sqrt() < 10.0 * f64::EPSILON)
        .collect();
    let inv = var
        .iter()
        .zip(&constant)
        .map(|(&v, &c)| if c { 0.0 } else { 1.0 / v.sqrt() })
        .collect();
    (constant, inv)
}

/// The Ledoit–Wolf shrinkage weight in [0, 1] (Ledoit & Wolf, 2004, lemma 3.2 and section 3.3, in the form of
/// scikit-learn's `ledoit_wolf_shrinkage`), from the statistics of centred data Z (n × p) with S = ZᵀZ/n:
/// `trace` = tr S, `delta_sum` = Σᵢⱼ Sᵢⱼ², `beta_sum` = Σₙ (|zₙ|²)².
fn shrinkage(n: usize, p: usize, trace: f64, delta_sum: f64, beta_sum: f64) -> f64 {
    if p == 1 {
        return 0.0; // the target equals the estimate
    }
    let (nf, pf) = (n as f64, p as f64);
    let mu = trace / pf;
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

    /// The weight from raw centred samples, as the statistics are defined.
    fn weight(z: &[f64], n: usize, p: usize) -> f64 {
        let g = gram(z, n, p);
        let nf = n as f64;
        let trace = (0..p).map(|i| g[i * p + i]).sum::<f64>() / nf;
        let delta_sum = g.iter().map(|v| v * v).sum::<f64>() / (nf * nf);
        let beta_sum = z.chunks_exact(p).map(|r| dot(r, r).powi(2)).sum();
        shrinkage(n, p, trace, delta_sum, beta_sum)
    }

    #[test]
    fn shrinkage_matches_hand_calculation() {
        // Two centred samples ±v, v = (1, 2, −1): S = vvᵀ, tr S = 6, μ = 2; Σₙ(|zₙ|²)² = 72, Σ(ZᵀZ)²/n² = 36, so
        // β = (72/2 − 36)/(3·2) = 0 and the weight is 0: the spread of the samples says nothing against S.
        let z = [1.0, 2.0, -1.0, -1.0, -2.0, 1.0];
        assert_eq!(weight(&z, 2, 3), 0.0);
        // Four samples on the axes, z = (±2, 0), (0, ±1): S = diag(2, 0.5), μ = 1.25.
        // Σₙ(|zₙ|²)² = 16+16+1+1 = 34; ZᵀZ = diag(8, 2), Σ G² / n² = 68/16 = 4.25.
        // β = (34/4 − 4.25)/(2·4) = 0.53125; δ = (4.25 − 2·1.25·2.5 + 2·1.5625)/2 = 0.5625; s = β/δ = 0.9444…
        let z = [2.0, 0.0, -2.0, 0.0, 0.0, 1.0, 0.0, -1.0];
        let s = weight(&z, 4, 2);
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

    /// Leaving a fold out by subtraction gives the model a direct fit on the remaining rows gives, up to rounding:
    /// same predictions, between-class coefficient differences within 1e-9. Features with a large offset and a feature constant within a
    /// class (a silent neuron) included.
    #[test]
    fn fold_by_subtraction_equals_a_direct_fit() {
        let (n, p) = (30, 4);
        let mut x = Vec::new();
        let mut y = Vec::new();
        for i in 0..n {
            let c = i % 3;
            let t = i as f64;
            y.push(c);
            x.extend([
                1000.0 + (t * 0.7).sin() + c as f64,
                (t * 1.3).cos() * (1.0 + c as f64),
                if c == 0 { 0.0 } else { (t * 0.37).sin() },
                5.0,
            ]);
        }
        let fold: Vec<usize> = (0..n).map(|i| (i * 7) % 4).collect();
        let set = FoldSet {
            x: &x,
            p,
            y: &y,
            fold: &fold,
            folds: 4,
            n_classes: 3,
        };
        let sums = FoldSums::of(&set, &[true; 4]);
        for f in 0..4 {
            let by_sub = sums.fit(&set, Some(f));
            let train: Vec<usize> = (0..n).filter(|&i| fold[i] != f).collect();
            let xt: Vec<f64> = train
                .iter()
                .flat_map(|&i| x[i * p..(i + 1) * p].iter().copied())
                .collect();
            let yt: Vec<usize> = train.iter().map(|&i| y[i]).collect();
            let direct_set = FoldSet {
                x: &xt,
                p,
                y: &yt,
                fold: &vec![0; train.len()],
                folds: 1,
                n_classes: 3,
            };
            let direct = FoldSums::of(&direct_set, &[]).fit(&direct_set, None);
            assert_eq!(by_sub.predict(&x), direct.predict(&x), "fold {f}");
            // A coefficient vector depends on the origin (the offsets differ), but its difference from another
            // class's does not: that difference, and the score differences, are what the argmax reads.
            let diff = |m: &LdaModel, k: usize| -> Vec<f64> {
                m.coef[k]
                    .iter()
                    .zip(&m.coef[0])
                    .map(|(a, b)| a - b)
                    .collect()
            };
            for k in 1..3 {
                for (a, b) in diff(&by_sub, k).iter().zip(diff(&direct, k)) {
                    assert!(
                        (a - b).abs() <= 1e-9 * b.abs().max(1.0),
                        "fold {f}: {a} vs {b}"
                    );
                }
            }
        }
    }

    /// Forming a fold's shares again when it is fitted (the large-matrix case) gives the very models of keeping
    /// them: the totals are summed in the same order and the shares are the same sums.
    #[test]
    fn shares_formed_again_give_the_kept_models_bit_for_bit() {
        let (n, p) = (40, 6);
        let y: Vec<usize> = (0..n).map(|i| i % 3).collect();
        let x: Vec<f64> = (0..n * p)
            .map(|v| {
                20.0 + (v as f64 * 0.613).sin() * (1.0 + (v % p) as f64)
                    + (y[v / p] * (v % 2)) as f64
            })
            .collect();
        let fold: Vec<usize> = (0..n).map(|i| (i * 3) % 5).collect();
        let set = FoldSet {
            x: &x,
            p,
            y: &y,
            fold: &fold,
            folds: 5,
            n_classes: 3,
        };
        let keep = |k: [bool; 5]| FoldSums::of(&set, &k);
        let (kept, again) = (keep([true; 5]), keep([false, true, false, true, false]));
        assert!(kept.share.iter().all(Option::is_some));
        assert_eq!(again.share.iter().filter(|s| s.is_some()).count(), 2);
        for f in 0..5 {
            let (a, b) = (kept.fit(&set, Some(f)), again.fit(&set, Some(f)));
            let bits = |m: &LdaModel| -> Vec<u64> {
                m.coef
                    .iter()
                    .flatten()
                    .chain(&m.intercept)
                    .map(|v| v.to_bits())
                    .collect()
            };
            assert_eq!(bits(&a), bits(&b), "fold {f}");
        }
    }

    /// The Woodbury route gives the model of the p × p route (coefficients and scores to rounding) with fewer trials
    /// than features, a feature constant in one class and one constant everywhere included.
    #[test]
    fn the_low_rank_route_equals_the_full_one() {
        let (n, p) = (24, 60);
        let mut x = Vec::new();
        let mut y = Vec::new();
        for i in 0..n {
            let c = i % 3;
            y.push(c);
            for j in 0..p {
                let t = (i * p + j) as f64;
                x.push(match j {
                    0 => 7.0,
                    1 if c == 1 => 2.0,
                    _ => {
                        50.0 + (t * 0.731).sin() * (1.0 + j as f64 / 10.0)
                            + (c * (j % 5)) as f64 * 0.3
                    }
                });
            }
        }
        let fold: Vec<usize> = (0..n).map(|i| (i * 5) % 4).collect();
        let set = FoldSet {
            x: &x,
            p,
            y: &y,
            fold: &fold,
            folds: 4,
            n_classes: 3,
        };
        assert!(low_rank_is_cheaper(18, p, 4, true));
        let (offset, shifted) = shift(&set);
        let sums = FoldSums::of(&set, &[true; 4]);
        for f in 0..4 {
            let low = low_rank_fit(&set, &offset, &shifted, Some(f)).expect("shrunk classes");
            let full = sums.fit(&set, Some(f));
            assert_eq!(low.classes, full.classes);
            for (a, b) in low.coef.iter().flatten().zip(full.coef.iter().flatten()) {
                assert!(
                    (a - b).abs() <= 1e-8 * b.abs().max(1e-6),
                    "fold {f}: {a} vs {b}"
                );
            }
            for (a, b) in low.intercept.iter().zip(&full.intercept) {
                assert!(
                    (a - b).abs() <= 1e-8 * b.abs().max(1.0),
                    "fold {f}: {a} vs {b}"
                );
            }
            assert_eq!(low.predict(&x), full.predict(&x), "fold {f}");
        }
    }
}
