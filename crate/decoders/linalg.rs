//! The few dense kernels the decoders need, written as plain loops in a fixed order.
//!
//! Why not a BLAS or `ndarray::dot`: their kernels differ between x86_64 (fused multiply-add, wide registers) and
//! wasm32, so the same fit would round differently in the page and the CLI. These loops compile to the same IEEE
//! operations on every target, which is what lets the two faces print identical numbers.

/// Dot product of two equal-length slices.
///
/// Four partial sums over interleaved elements, combined as `(s0 + s1) + (s2 + s3)`, then the tail: a fixed order
/// (so every target rounds identically) that breaks the add-latency chain of a single accumulator and lets the
/// compiler use SIMD lanes on x86_64 and wasm32 alike.
#[inline]
pub fn dot(a: &[f64], b: &[f64]) -> f64 {
    let n = a.len().min(b.len());
    let (a, b) = (&a[..n], &b[..n]);
    let mut s = [0.0f64; 4];
    let chunks = n / 4;
    for k in 0..chunks {
        let (x, y) = (&a[4 * k..4 * k + 4], &b[4 * k..4 * k + 4]);
        s[0] += x[0] * y[0];
        s[1] += x[1] * y[1];
        s[2] += x[2] * y[2];
        s[3] += x[3] * y[3];
    }
    let mut total = (s[0] + s[1]) + (s[2] + s[3]);
    for i in 4 * chunks..n {
        total += a[i] * b[i];
    }
    total
}

/// `(x − centre)·w`, in [`dot`]'s order of partial sums, without a centred copy of `x`.
#[inline]
pub fn dot_centred(x: &[f64], centre: &[f64], w: &[f64]) -> f64 {
    let n = x.len().min(centre.len()).min(w.len());
    let (x, c, w) = (&x[..n], &centre[..n], &w[..n]);
    let mut s = [0.0f64; 4];
    let chunks = n / 4;
    for k in 0..chunks {
        for (l, sl) in s.iter_mut().enumerate() {
            let i = 4 * k + l;
            *sl += (x[i] - c[i]) * w[i];
        }
    }
    let mut total = (s[0] + s[1]) + (s[2] + s[3]);
    for i in 4 * chunks..n {
        total += (x[i] - c[i]) * w[i];
    }
    total
}

/// `y += a * x`.
#[inline]
pub fn axpy(a: f64, x: &[f64], y: &mut [f64]) {
    for (yi, xi) in y.iter_mut().zip(x) {
        *yi += a * xi;
    }
}

/// Upper triangle of `ZᵀZ` for row-major `z` (n × p), mirrored to a full p × p matrix.
///
/// Four data rows are taken at a time: each element of the result is loaded and stored once per four products
/// instead of once per product, which is what bounded the speed of the one-row form (it is most of a shrinkage LDA
/// fit). The four products are added as `(a + b) + (c + d)` before joining the running sum: a fixed order, so every
/// target rounds identically.
pub fn gram(z: &[f64], n: usize, p: usize) -> Vec<f64> {
    let mut g = vec![0.0; p * p];
    let quads = n / 4;
    for q in 0..quads {
        let r = 4 * q;
        let (a, b, c, d) = (
            &z[r * p..(r + 1) * p],
            &z[(r + 1) * p..(r + 2) * p],
            &z[(r + 2) * p..(r + 3) * p],
            &z[(r + 3) * p..(r + 4) * p],
        );
        for i in 0..p {
            let (ai, bi, ci, di) = (a[i], b[i], c[i], d[i]);
            let out = &mut g[i * p + i..(i + 1) * p];
            let rows = a[i..].iter().zip(&b[i..]).zip(&c[i..]).zip(&d[i..]);
            for (o, (((aj, bj), cj), dj)) in out.iter_mut().zip(rows) {
                *o += (ai * aj + bi * bj) + (ci * cj + di * dj);
            }
        }
    }
    for r in 4 * quads..n {
        let row = &z[r * p..(r + 1) * p];
        for i in 0..p {
            axpy(row[i], &row[i..], &mut g[i * p + i..(i + 1) * p]);
        }
    }
    for i in 0..p {
        for j in 0..i {
            g[i * p + j] = g[j * p + i];
        }
    }
    g
}

/// Cholesky factor `U` (row-major, upper triangular, `A = UᵀU`) of a symmetric positive-definite matrix, or `None`
/// if a pivot is not positive. Only the upper triangle of `a` is read.
///
/// The outer-product form, two pivot rows at a time: rows k and k+1 are finished, then every row below subtracts
/// both of their multiples in one contiguous pass. That halves the passes over the trailing rows compared with one
/// pivot at a time, which is most of the cost on these small matrices; the order of operations is fixed, so every
/// target rounds identically.
pub fn cholesky(a: &[f64], p: usize) -> Option<Vec<f64>> {
    cholesky_owned(a.to_vec(), p)
}

/// [`cholesky`] factoring a matrix the caller no longer needs, in its own storage (saves a copy per Newton step).
pub fn cholesky_owned(mut u: Vec<f64>, p: usize) -> Option<Vec<f64>> {
    let mut k = 0;
    while k < p {
        pivot_row(&mut u, p, k)?;
        if k + 1 == p {
            break;
        }
        // Bring row k+1 up to date with row k alone, then finish it.
        let (head, tail) = u.split_at_mut((k + 1) * p);
        let row_k = &head[k * p..(k + 1) * p];
        axpy(-row_k[k + 1], &row_k[k + 1..], &mut tail[k + 1..p]);
        pivot_row(&mut u, p, k + 1)?;
        let (head, tail) = u.split_at_mut((k + 2) * p);
        let (row_k, row_k1) = head[k * p..].split_at(p);
        for i in k + 2..p {
            let (f0, f1) = (row_k[i], row_k1[i]);
            let row_i = &mut tail[(i - k - 2) * p + i..(i - k - 1) * p];
            for ((x, a), b) in row_i.iter_mut().zip(&row_k[i..]).zip(&row_k1[i..]) {
                *x -= f0 * a + f1 * b;
            }
        }
        k += 2;
    }
    for i in 0..p {
        for j in 0..i {
            u[i * p + j] = 0.0;
        }
    }
    Some(u)
}

/// Take the square root of pivot k and scale the rest of row k by it.
fn pivot_row(u: &mut [f64], p: usize, k: usize) -> Option<()> {
    let pivot = u[k * p + k];
    if pivot <= 0.0 || !pivot.is_finite() {
        return None;
    }
    let d = pivot.sqrt();
    u[k * p + k] = d;
    for v in &mut u[k * p + k + 1..(k + 1) * p] {
        *v /= d;
    }
    Some(())
}

/// Solve `UᵀU x = b` in place, given the Cholesky factor.
pub fn cholesky_solve(u: &[f64], p: usize, b: &mut [f64]) {
    for i in 0..p {
        b[i] /= u[i * p + i];
        let (head, tail) = b.split_at_mut(i + 1);
        axpy(-head[i], &u[i * p + i + 1..(i + 1) * p], tail);
    }
    for i in (0..p).rev() {
        let s = b[i] - dot(&u[i * p + i + 1..(i + 1) * p], &b[i + 1..]);
        b[i] = s / u[i * p + i];
    }
}

/// Turn the Cholesky factor of `A` into that of `A + s·xxᵀ` (`s` = +1 update, −1 downdate) in O(p²), by the
/// rotations of LINPACK's `dchud`/`dchdd` (Dongarra et al., LINPACK Users' Guide, 1979). `x` is overwritten.
/// Returns false if a downdate would leave the matrix not positive definite (the factor is then unusable).
pub fn cholesky_rank_one(u: &mut [f64], p: usize, x: &mut [f64], s: f64) -> bool {
    for k in 0..p {
        let d = u[k * p + k];
        let r2 = d * d + s * x[k] * x[k];
        if r2 <= 0.0 || !r2.is_finite() {
            return false;
        }
        let r = r2.sqrt();
        let (c, sn) = (r / d, x[k] / d);
        u[k * p + k] = r;
        for j in k + 1..p {
            let ukj = (u[k * p + j] + s * sn * x[j]) / c;
            x[j] = c * x[j] - sn * ukj;
            u[k * p + j] = ukj;
        }
    }
    true
}

/// Factor a symmetric positive semi-definite matrix, adding the smallest ridge (relative to its mean diagonal) that
/// makes it positive definite. Returns the factor and the ridge that was added (0 in the ordinary case).
///
/// A finite matrix is positive definite once the ridge passes its largest absolute row sum (Gershgorin), so the
/// ridge stops growing long before it could overflow. A matrix with a NaN or infinite entry never factors, whatever
/// the ridge: it gets the factor of its scale times the identity and an infinite ridge, so that a fit finishes
/// instead of looping for ever. (Checked input never gets there: `recipe::limits::MAX_MAGNITUDE`.)
pub fn cholesky_with_ridge(a: &[f64], p: usize) -> (Vec<f64>, f64) {
    if let Some(l) = cholesky(a, p) {
        return (l, 0.0);
    }
    let mean_diag = (0..p).map(|i| a[i * p + i]).sum::<f64>() / p as f64;
    let scale = if mean_diag > 0.0 && mean_diag.is_finite() {
        mean_diag
    } else {
        1.0
    };
    let mut ridge = scale * 1e-12;
    let finite = a.iter().all(|v| v.is_finite());
    while finite && ridge.is_finite() {
        let mut b = a.to_vec();
        for i in 0..p {
            b[i * p + i] += ridge;
        }
        if let Some(l) = cholesky(&b, p) {
            return (l, ridge);
        }
        ridge *= 10.0;
    }
    let mut l = vec![0.0; p * p];
    for i in 0..p {
        l[i * p + i] = scale.sqrt();
    }
    (l, f64::INFINITY)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gram_matches_hand_product() {
        // Z = [[1, 2], [3, 4], [5, 6]]: ZᵀZ = [[35, 44], [44, 56]].
        let g = gram(&[1.0, 2.0, 3.0, 4.0, 5.0, 6.0], 3, 2);
        assert_eq!(g, vec![35.0, 44.0, 44.0, 56.0]);
    }

    #[test]
    fn cholesky_solves_a_small_system() {
        // A = [[4, 2], [2, 3]], b = [2, 1] → x = [0.5, 0].
        let a = [4.0, 2.0, 2.0, 3.0];
        let l = cholesky(&a, 2).unwrap();
        let mut b = [2.0, 1.0];
        cholesky_solve(&l, 2, &mut b);
        assert!((b[0] - 0.5).abs() < 1e-12 && b[1].abs() < 1e-12, "{b:?}");
    }

    #[test]
    fn rank_one_update_and_downdate_match_refactoring() {
        // A = [[4, 2], [2, 3]], x = (1, 2): A + xxᵀ = [[5, 4], [4, 7]].
        let mut u = cholesky(&[4.0, 2.0, 2.0, 3.0], 2).unwrap();
        assert!(cholesky_rank_one(&mut u, 2, &mut [1.0, 2.0], 1.0));
        let direct = cholesky(&[5.0, 4.0, 4.0, 7.0], 2).unwrap();
        assert!(
            u.iter().zip(&direct).all(|(a, b)| (a - b).abs() < 1e-12),
            "{u:?} vs {direct:?}"
        );
        assert!(cholesky_rank_one(&mut u, 2, &mut [1.0, 2.0], -1.0));
        let back = cholesky(&[4.0, 2.0, 2.0, 3.0], 2).unwrap();
        assert!(u.iter().zip(&back).all(|(a, b)| (a - b).abs() < 1e-12));
        // Removing more than is there must be refused: [[1, 0], [0, 1]] − (2, 0)(2, 0)ᵀ is indefinite.
        let mut eye = cholesky(&[1.0, 0.0, 0.0, 1.0], 2).unwrap();
        assert!(!cholesky_rank_one(&mut eye, 2, &mut [2.0, 0.0], -1.0));
    }

    #[test]
    fn singular_matrix_gets_a_small_ridge() {
        let a = [1.0, 1.0, 1.0, 1.0];
        assert!(cholesky(&a, 2).is_none());
        let (_, ridge) = cholesky_with_ridge(&a, 2);
        assert!(ridge > 0.0 && ridge < 1e-6);
    }

    #[test]
    fn a_non_finite_matrix_ends_with_a_scaled_identity() {
        // Before the guard the ridge grew for ever (issue 12, item 1: values near ±1e308).
        for bad in [f64::NAN, f64::INFINITY, f64::NEG_INFINITY] {
            let a = [4.0, bad, bad, 4.0];
            let (l, ridge) = cholesky_with_ridge(&a, 2);
            assert_eq!(ridge, f64::INFINITY);
            assert_eq!(l, vec![2.0, 0.0, 0.0, 2.0]);
        }
        // Finite but enormous: still factored, with a finite ridge.
        let (l, ridge) = cholesky_with_ridge(&[1e300, 1e300, 1e300, 1e300], 2);
        assert!(
            ridge.is_finite() && l.iter().all(|v| v.is_finite()),
            "{ridge} {l:?}"
        );
    }
}
