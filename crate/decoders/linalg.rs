//! The few dense kernels the decoders need, written as plain loops in a fixed order.
//!
//! Why not a BLAS or `ndarray::dot`: their kernels differ between x86_64 (fused multiply-add, wide registers) and
//! wasm32, so the same fit would round differently in the page and the CLI. These loops compile to the same IEEE
//! operations on every target, which is what lets the two faces print identical numbers.

use super::simd::multiversion;

/// The two precisions the linear SVM's solvers work in: double everywhere, and single for the passes that only find
/// a starting point or a Newton direction (`linear_svm`, "single precision"), where half the bytes and twice the
/// lanes per register are what count. Every other kernel here is double precision only.
pub trait Real:
    Copy
    + PartialOrd
    + std::ops::Add<Output = Self>
    + std::ops::Sub<Output = Self>
    + std::ops::Mul<Output = Self>
    + std::ops::Div<Output = Self>
    + std::ops::AddAssign
{
    const ZERO: Self;
    /// Rounded to the nearest value of this precision.
    fn from_f64(v: f64) -> Self;
    fn to_f64(self) -> f64;
    fn sqrt(self) -> Self;
    fn is_finite(self) -> bool;
    /// The linear SVM's dot product of a row with the weights: [`dot_wide`] or [`dot_single`].
    fn dot_rows(a: &[Self], b: &[Self]) -> Self;
}

impl Real for f64 {
    const ZERO: f64 = 0.0;
    #[inline(always)]
    fn from_f64(v: f64) -> f64 {
        v
    }
    #[inline(always)]
    fn to_f64(self) -> f64 {
        self
    }
    #[inline(always)]
    fn sqrt(self) -> f64 {
        f64::sqrt(self)
    }
    #[inline(always)]
    fn is_finite(self) -> bool {
        f64::is_finite(self)
    }
    #[inline(always)]
    fn dot_rows(a: &[f64], b: &[f64]) -> f64 {
        dot_wide(a, b)
    }
}

impl Real for f32 {
    const ZERO: f32 = 0.0;
    #[inline(always)]
    fn from_f64(v: f64) -> f32 {
        v as f32
    }
    #[inline(always)]
    fn to_f64(self) -> f64 {
        f64::from(self)
    }
    #[inline(always)]
    fn sqrt(self) -> f32 {
        f32::sqrt(self)
    }
    #[inline(always)]
    fn is_finite(self) -> bool {
        f32::is_finite(self)
    }
    #[inline(always)]
    fn dot_rows(a: &[f32], b: &[f32]) -> f32 {
        dot_single(a, b)
    }
}

/// Dot product of two equal-length slices.
///
/// Four partial sums over interleaved elements, combined as `(s0 + s1) + (s2 + s3)`, then the tail: a fixed order
/// (so every target rounds identically) that breaks the add-latency chain of a single accumulator and lets the
/// compiler use SIMD lanes on x86_64 and wasm32 alike.
///
/// `a` may also be single precision (a factor kept in single precision, [`cholesky_solve`]): its values are widened
/// exactly, and the products and sums are double precision as for two double slices.
#[inline]
pub fn dot<T: Real>(a: &[T], b: &[f64]) -> f64 {
    let n = a.len().min(b.len());
    let (a, b) = (&a[..n], &b[..n]);
    let mut s = [0.0f64; 4];
    let chunks = n / 4;
    for k in 0..chunks {
        let (x, y) = (&a[4 * k..4 * k + 4], &b[4 * k..4 * k + 4]);
        s[0] += x[0].to_f64() * y[0];
        s[1] += x[1].to_f64() * y[1];
        s[2] += x[2].to_f64() * y[2];
        s[3] += x[3].to_f64() * y[3];
    }
    let mut total = (s[0] + s[1]) + (s[2] + s[3]);
    for i in 4 * chunks..n {
        total += a[i].to_f64() * b[i];
    }
    total
}

/// Dot product with sixteen partial sums: element `i` joins sum `i mod 16`, the sums are folded in halves
/// (`sₗ + sₗ₊₈`, then `sₗ + sₗ₊₄`, …, a fixed tree that matches adding whole registers), then the tail is added one
/// element at a time.
///
/// [`dot`]'s four sums fill one 256-bit register, so each step waits for the previous addition (several cycles for
/// four multiply–adds); sixteen sums keep several registers in flight. It rounds differently from [`dot`], so only
/// the linear SVM uses it (changing [`dot`] would move every decoder's numbers); the order is written out here, so
/// every target still rounds the same way.
#[inline(always)]
pub fn dot_wide(a: &[f64], b: &[f64]) -> f64 {
    #[cfg(target_arch = "x86_64")]
    if super::simd::avx2() {
        // SAFETY: `avx2()` is true only when the processor reports AVX2.
        return unsafe { dot_wide_avx2(a, b) };
    }
    folded_dot::<f64, 16>(a, b)
}

/// The portable body of [`dot_wide`] and [`dot_single`]: element `i` joins sum `i mod LANES`, the sums are folded in
/// halves (`sₗ + sₗ₊LANES/2`, then `sₗ + sₗ₊LANES/4`, …), then the tail is added one element at a time. `LANES` is a
/// power of two.
#[inline(always)]
fn folded_dot<T: Real, const LANES: usize>(a: &[T], b: &[T]) -> T {
    let n = a.len().min(b.len());
    let (a, b) = (&a[..n], &b[..n]);
    let mut s = [T::ZERO; LANES];
    let (mut ca, mut cb) = (a.chunks_exact(LANES), b.chunks_exact(LANES));
    for (x, y) in (&mut ca).zip(&mut cb) {
        for l in 0..LANES {
            s[l] += x[l] * y[l];
        }
    }
    let mut width = LANES;
    while width > 1 {
        width /= 2;
        for l in 0..width {
            let upper = s[l + width];
            s[l] += upper;
        }
    }
    let mut total = s[0];
    for (&x, &y) in ca.remainder().iter().zip(cb.remainder()) {
        total += x * y;
    }
    total
}

/// [`dot_wide`] in AVX2 registers, bit for bit: sum `4k + j` is lane `j` of register `k`, products and sums are
/// separate instructions (no fused multiply–add), and the registers are folded in [`dot_wide`]'s tree (registers 0, 1
/// += 2, 3; 0 += 1; lanes 0, 1 += 2, 3; lane 0 += 1), then the tail is added one element at a time. Written out
/// because from the portable code the compiler kept the sixteen sums in eight 128-bit registers even in the AVX2
/// copies (its cost model for a generic x86-64 target), which halved the speed of the dual solver's row loop.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
#[inline]
unsafe fn dot_wide_avx2(a: &[f64], b: &[f64]) -> f64 {
    use std::arch::x86_64::*;
    let n = a.len().min(b.len());
    let chunks = n / 16;
    let (pa, pb) = (a.as_ptr(), b.as_ptr());
    let mut s = [_mm256_setzero_pd(); 4];
    for c in 0..chunks {
        for (k, reg) in s.iter_mut().enumerate() {
            let i = 16 * c + 4 * k;
            // SAFETY: i + 4 ≤ 16 · chunks ≤ n, inside both slices.
            let (x, y) = unsafe { (_mm256_loadu_pd(pa.add(i)), _mm256_loadu_pd(pb.add(i))) };
            *reg = _mm256_add_pd(*reg, _mm256_mul_pd(x, y));
        }
    }
    let low = _mm256_add_pd(s[0], s[2]);
    let high = _mm256_add_pd(s[1], s[3]);
    let four = _mm256_add_pd(low, high);
    let two = _mm_add_pd(_mm256_castpd256_pd128(four), _mm256_extractf128_pd(four, 1));
    let mut total = _mm_cvtsd_f64(two) + _mm_cvtsd_f64(_mm_unpackhi_pd(two, two));
    for i in 16 * chunks..n {
        total += a[i] * b[i];
    }
    total
}

/// [`dot_wide`] in single precision, with thirty-two partial sums (four 256-bit registers of eight): element `i` joins
/// sum `i mod 32`, the sums are folded in halves (`sₗ + sₗ₊₁₆`, then `sₗ + sₗ₊₈`, …), then the tail is added one
/// element at a time. For the linear SVM's passes in single precision only.
#[inline(always)]
pub fn dot_single(a: &[f32], b: &[f32]) -> f32 {
    #[cfg(target_arch = "x86_64")]
    if super::simd::avx2() {
        // SAFETY: `avx2()` is true only when the processor reports AVX2.
        return unsafe { dot_single_avx2(a, b) };
    }
    folded_dot::<f32, 32>(a, b)
}

/// [`dot_single`] in AVX2 registers, bit for bit, as [`dot_wide_avx2`] is for [`dot_wide`]: sum `8k + j` is lane `j`
/// of register `k`, no fused multiply–add, folded in [`dot_single`]'s tree (registers 0, 1 += 2, 3; 0 += 1; lanes
/// 0–3 += 4–7; lanes 0, 1 += 2, 3; lane 0 += 1), then the tail.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
#[inline]
unsafe fn dot_single_avx2(a: &[f32], b: &[f32]) -> f32 {
    use std::arch::x86_64::*;
    let n = a.len().min(b.len());
    let chunks = n / 32;
    let (pa, pb) = (a.as_ptr(), b.as_ptr());
    let mut s = [_mm256_setzero_ps(); 4];
    for c in 0..chunks {
        for (k, reg) in s.iter_mut().enumerate() {
            let i = 32 * c + 8 * k;
            // SAFETY: i + 8 ≤ 32 · chunks ≤ n, inside both slices.
            let (x, y) = unsafe { (_mm256_loadu_ps(pa.add(i)), _mm256_loadu_ps(pb.add(i))) };
            *reg = _mm256_add_ps(*reg, _mm256_mul_ps(x, y));
        }
    }
    let low = _mm256_add_ps(s[0], s[2]);
    let high = _mm256_add_ps(s[1], s[3]);
    let eight = _mm256_add_ps(low, high);
    let four = _mm_add_ps(
        _mm256_castps256_ps128(eight),
        _mm256_extractf128_ps(eight, 1),
    );
    let two = _mm_add_ps(four, _mm_movehl_ps(four, four));
    let one = _mm_add_ss(two, _mm_shuffle_ps(two, two, 1));
    let mut total = _mm_cvtss_f32(one);
    for i in 32 * chunks..n {
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

/// `y += a * x`, in either precision.
#[inline]
pub fn axpy<T: Real>(a: T, x: &[T], y: &mut [T]) {
    for (yi, xi) in y.iter_mut().zip(x) {
        *yi += a * *xi;
    }
}

/// Upper triangle of `ZᵀZ` for row-major `z` (n × p), mirrored to a full p × p matrix.
///
/// Every element is a running sum over the rows in one fixed order: four rows at a time, each group's four products
/// added as `(a + b) + (c + d)` before joining the sum, then the rows left over one at a time. That order fixes
/// every rounding; the loops around it are free. They compute the result in tiles of 4 × 4 elements held in
/// registers while the rows go by, a block of [`GRAM_ROWS`] rows at a time (so the rows stay in cache): each element
/// is loaded and stored once per block instead of once per four rows, which is what bounded the speed of the
/// row-by-row form. The tile loops are compiled for the processor's widest instructions ([`super::simd`]).
pub fn gram(z: &[f64], n: usize, p: usize) -> Vec<f64> {
    let mut g = vec![0.0; p * p];
    gram_upper(z, n, p, &mut g);
    for i in 0..p {
        for j in 0..i {
            g[i * p + j] = g[j * p + i];
        }
    }
    g
}

/// The upper triangle of `ZᵀZ` alone, in [`gram`]'s order of sums; the elements below the diagonal are unspecified.
/// For callers that read no more (a Cholesky factor, sums of scatters): mirroring a wide matrix reads one column per
/// element, which costs more than the triangle's additions.
pub fn gram_upper_only(z: &[f64], n: usize, p: usize) -> Vec<f64> {
    let mut g = vec![0.0; p * p];
    gram_upper(z, n, p, &mut g);
    g
}

/// Rows per pass of [`gram`]'s tiles: a multiple of 4, so the groups of four rows are the same in every pass.
const GRAM_ROWS: usize = 64;
/// Rows and columns of one tile of [`gram`] and [`cholesky`].
const TILE_R: usize = 4;
const TILE_W: usize = 4;

multiversion! {
    /// Add the upper triangle of `ZᵀZ` to `g` (elements below the diagonal of `g` are left in any state).
    ///
    /// Each block of rows is first copied into a panel, column tile by column tile (`panel[t][row][0..4]`), so a
    /// tile's loop reads its rows' values from consecutive addresses instead of one cache line (and, for wide
    /// matrices, one page) per row: that stride, not the arithmetic, is what held wide Gram matrices back. The
    /// copy moves values, it adds nothing, so the order of every sum is the one documented on [`gram`].
    fn gram_upper(z: &[f64], n: usize, p: usize, g: &mut [f64]) {
        let quads_end = n / 4 * 4;
        // Columns covered by full tiles; the columns past them go through `gram_edge`, reading `z` itself.
        let tiles = p / TILE_W;
        let mut panel = vec![0.0; GRAM_ROWS.min(quads_end) * tiles * TILE_W];
        let mut r0 = 0;
        while r0 < quads_end {
            let r1 = (r0 + GRAM_ROWS).min(quads_end);
            let rows = r1 - r0;
            let stride = rows * TILE_W;
            for (r, row) in z[r0 * p..r1 * p].chunks_exact(p).enumerate() {
                for (t, part) in row[..tiles * TILE_W].chunks_exact(TILE_W).enumerate() {
                    panel[t * stride + r * TILE_W..][..TILE_W].copy_from_slice(part);
                }
            }
            let mut i0 = 0;
            while i0 < p {
                let mut j0 = i0;
                while j0 < p {
                    if i0 + TILE_R <= p && j0 + TILE_W <= p {
                        let column = |c: usize| &panel[c / TILE_W * stride..][..stride];
                        gram_tile(column(i0), column(j0), p, i0, j0, g);
                    } else {
                        gram_edge(z, p, r0, r1, i0..(i0 + TILE_R).min(p), j0..(j0 + TILE_W).min(p), g);
                    }
                    j0 += TILE_W;
                }
                i0 += TILE_R;
            }
            r0 = r1;
        }
        for r in quads_end..n {
            let row = &z[r * p..(r + 1) * p];
            for i in 0..p {
                axpy(row[i], &row[i..], &mut g[i * p + i..(i + 1) * p]);
            }
        }
    }
}

/// One full tile of [`gram_upper`]: rows `i0..i0 + 4` × columns `j0..j0 + 4` of `g`, over the rows of one block,
/// given the block's values in columns `i0..i0 + 4` (`pi`) and `j0..j0 + 4` (`pj`), four per row.
#[inline(always)]
fn gram_tile(pi: &[f64], pj: &[f64], p: usize, i0: usize, j0: usize, g: &mut [f64]) {
    let mut acc = [Lanes::load(&g[i0 * p + j0..]); TILE_R];
    for (r, acc_r) in acc.iter_mut().enumerate().skip(1) {
        *acc_r = Lanes::load(&g[(i0 + r) * p + j0..]);
    }
    for (qi, qj) in pi.chunks_exact(4 * TILE_W).zip(pj.chunks_exact(4 * TILE_W)) {
        let at = |q: &[f64], row: usize| Lanes::load(&q[row * TILE_W..]);
        let (aj, bj, cj, dj) = (at(qj, 0), at(qj, 1), at(qj, 2), at(qj, 3));
        let (ai, bi, ci, di) = (at(qi, 0), at(qi, 1), at(qi, 2), at(qi, 3));
        for (r, acc_r) in acc.iter_mut().enumerate() {
            let (x, y, u, v) = (ai.splat(r), bi.splat(r), ci.splat(r), di.splat(r));
            *acc_r = acc_r.add(x.mul(aj).add(y.mul(bj)).add(u.mul(cj).add(v.mul(dj))));
        }
    }
    for (r, acc_r) in acc.iter().enumerate() {
        acc_r.store(&mut g[(i0 + r) * p + j0..]);
    }
}

/// Four doubles operated on lane by lane: plain IEEE operations the compiler maps to one AVX2 register (two SSE2 or
/// wasm registers), so a tile's sums stay in registers.
#[derive(Clone, Copy)]
struct Lanes([f64; 4]);

impl Lanes {
    #[inline(always)]
    fn load(s: &[f64]) -> Lanes {
        Lanes(s[..4].try_into().expect("four values"))
    }
    #[inline(always)]
    fn store(self, s: &mut [f64]) {
        s[..4].copy_from_slice(&self.0);
    }
    #[inline(always)]
    fn splat(self, lane: usize) -> Lanes {
        Lanes([self.0[lane]; 4])
    }
    #[inline(always)]
    fn add(self, o: Lanes) -> Lanes {
        Lanes([
            self.0[0] + o.0[0],
            self.0[1] + o.0[1],
            self.0[2] + o.0[2],
            self.0[3] + o.0[3],
        ])
    }
    #[inline(always)]
    fn sub(self, o: Lanes) -> Lanes {
        Lanes([
            self.0[0] - o.0[0],
            self.0[1] - o.0[1],
            self.0[2] - o.0[2],
            self.0[3] - o.0[3],
        ])
    }
    #[inline(always)]
    fn mul(self, o: Lanes) -> Lanes {
        Lanes([
            self.0[0] * o.0[0],
            self.0[1] * o.0[1],
            self.0[2] * o.0[2],
            self.0[3] * o.0[3],
        ])
    }
}

/// A tile of [`gram_upper`] cut by the edge of the matrix, with the same operations element by element.
#[inline(always)]
fn gram_edge(
    z: &[f64],
    p: usize,
    r0: usize,
    r1: usize,
    rows: std::ops::Range<usize>,
    cols: std::ops::Range<usize>,
    g: &mut [f64],
) {
    for i in rows {
        for j in cols.clone() {
            let mut s = g[i * p + j];
            let mut q = r0;
            while q < r1 {
                let v = |k: usize, col: usize| z[(q + k) * p + col];
                s += (v(0, i) * v(0, j) + v(1, i) * v(1, j))
                    + (v(2, i) * v(2, j) + v(3, i) * v(3, j));
                q += 4;
            }
            g[i * p + j] = s;
        }
    }
}

/// Cholesky factor `U` (row-major, upper triangular, `A = UᵀU`) of a symmetric positive-definite matrix, or `None`
/// if a pivot is not positive. Only the upper triangle of `a` is read.
///
/// The outer-product form, two pivot rows at a time: rows k and k+1 are finished, then every row below subtracts
/// both of their multiples, `x −= f0·a + f1·b`. That is the fixed order of operations of every element (so every
/// target rounds identically). The loops are blocked without changing it: the pivot rows of a block of
/// [`CHOLESKY_BLOCK`] are finished and applied to the rows of the block one pair at a time; the rows below the block
/// then take all the block's pairs in order, in 4 × 4 tiles held in registers, so each element is loaded and stored
/// once per block instead of once per pair.
pub fn cholesky(a: &[f64], p: usize) -> Option<Vec<f64>> {
    cholesky_owned(a.to_vec(), p)
}

/// Pivot rows per block of [`cholesky`]: even, so blocks hold whole pairs.
const CHOLESKY_BLOCK: usize = 32;

multiversion! {
    /// [`cholesky`] factoring a matrix the caller no longer needs, in its own storage (saves a copy per Newton step).
    pub fn cholesky_owned(u: Vec<f64>, p: usize) -> Option<Vec<f64>> {
        let mut u = u;
        let mut k0 = 0;
        while k0 < p {
            let k1 = (k0 + CHOLESKY_BLOCK).min(p);
            let mut k = k0;
            while k < k1 {
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
                for i in k + 2..k1 {
                    let (f0, f1) = (row_k[i], row_k1[i]);
                    let row_i = &mut tail[(i - k - 2) * p + i..(i - k - 1) * p];
                    for ((x, a), b) in row_i.iter_mut().zip(&row_k[i..]).zip(&row_k1[i..]) {
                        *x -= f0 * a + f1 * b;
                    }
                }
                k += 2;
            }
            if k1 < p {
                trailing_update(&mut u, p, k0, k1);
            }
            k0 = k1;
        }
        for i in 0..p {
            for j in 0..i {
                u[i * p + j] = 0.0;
            }
        }
        Some(u)
    }
}

/// Apply the finished pivot pairs of rows `k0..k1` to the upper triangle of the rows below, `x −= f0·a + f1·b`
/// pair by pair in order (elements below the diagonal are left in any state: the factor never reads them).
#[inline(always)]
fn trailing_update(u: &mut [f64], p: usize, k0: usize, k1: usize) {
    let (pivots, rest) = u.split_at_mut(k1 * p);
    let pivots = &pivots[k0 * p..];
    let mut i0 = k1;
    while i0 < p {
        let mut j0 = i0;
        while j0 < p {
            if i0 + TILE_R <= p && j0 + TILE_W <= p {
                trailing_tile(pivots, rest, p, k1, i0, j0);
            } else {
                for i in i0..(i0 + TILE_R).min(p) {
                    for j in j0..(j0 + TILE_W).min(p) {
                        let mut x = rest[(i - k1) * p + j];
                        for pair in pivots.chunks_exact(2 * p) {
                            let (a, b) = pair.split_at(p);
                            x -= a[i] * a[j] + b[i] * b[j];
                        }
                        rest[(i - k1) * p + j] = x;
                    }
                }
            }
            j0 += TILE_W;
        }
        i0 += TILE_R;
    }
}

/// One full tile of [`trailing_update`]: rows `i0..i0 + 4` × columns `j0..j0 + 4`.
#[inline(always)]
fn trailing_tile(pivots: &[f64], rest: &mut [f64], p: usize, k1: usize, i0: usize, j0: usize) {
    let at = |r: usize| (i0 + r - k1) * p + j0;
    let mut acc = [Lanes::load(&rest[at(0)..]); TILE_R];
    for (r, acc_r) in acc.iter_mut().enumerate().skip(1) {
        *acc_r = Lanes::load(&rest[at(r)..]);
    }
    assert!(i0 + TILE_R <= p && j0 + TILE_W <= p);
    for pair in pivots.chunks_exact(2 * p) {
        let (a, b) = pair.split_at(p);
        let (aj, bj) = (Lanes::load(&a[j0..j0 + 4]), Lanes::load(&b[j0..j0 + 4]));
        let (ai, bi) = (Lanes::load(&a[i0..i0 + 4]), Lanes::load(&b[i0..i0 + 4]));
        for (r, acc_r) in acc.iter_mut().enumerate() {
            *acc_r = acc_r.sub(ai.splat(r).mul(aj).add(bi.splat(r).mul(bj)));
        }
    }
    for (r, acc_r) in acc.iter().enumerate() {
        acc_r.store(&mut rest[at(r)..]);
    }
}

/// Take the square root of pivot k and scale the rest of row k by it.
#[inline(always)]
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

/// Solve `UᵀU x = b` in place, given the Cholesky factor, in double precision; the factor may be kept in single
/// precision (its values are widened exactly; for a double factor the operations are those of `axpy` and [`dot`]).
pub fn cholesky_solve<T: Real>(u: &[T], p: usize, b: &mut [f64]) {
    for i in 0..p {
        b[i] /= u[i * p + i].to_f64();
        let (head, tail) = b.split_at_mut(i + 1);
        let a = -head[i];
        for (t, v) in tail.iter_mut().zip(&u[i * p + i + 1..(i + 1) * p]) {
            *t += a * v.to_f64();
        }
    }
    for i in (0..p).rev() {
        let s = b[i] - dot(&u[i * p + i + 1..(i + 1) * p], &b[i + 1..]);
        b[i] = s / u[i * p + i].to_f64();
    }
}

/// Turn the Cholesky factor of `A` into that of `A + s·xxᵀ` (`s` = +1 update, −1 downdate) in O(p²), by the
/// rotations of LINPACK's `dchud`/`dchdd` (Dongarra et al., LINPACK Users' Guide, 1979), in the factor's precision.
/// `x` is overwritten. Returns false if a downdate would leave the matrix not positive definite (the factor is then
/// unusable). Inlined, so the caller's instruction set ([`super::simd`]) compiles it.
#[inline(always)]
pub fn cholesky_rank_one<T: Real>(u: &mut [T], p: usize, x: &mut [T], s: T) -> bool {
    for k in 0..p {
        let d = u[k * p + k];
        let r2 = d * d + s * x[k] * x[k];
        if r2 <= T::ZERO || !r2.is_finite() {
            return false;
        }
        let r = r2.sqrt();
        // Multiplying by 1/c rather than dividing by c: a division costs several multiplications' time.
        let (c, inv_c, sn) = (r / d, d / r, x[k] / d);
        let s_sn = s * sn;
        u[k * p + k] = r;
        for j in k + 1..p {
            let ukj = (u[k * p + j] + s_sn * x[j]) * inv_c;
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

    /// Deterministic values in (−1, 1) for the order tests.
    fn values(len: usize, seed: u64) -> Vec<f64> {
        let mut state = seed;
        (0..len)
            .map(|_| {
                state = state
                    .wrapping_mul(6364136223846793005)
                    .wrapping_add(1442695040888963407);
                (state >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0
            })
            .collect()
    }

    /// The tiles and row blocks of [`gram`] must not change a bit: compare with the documented order written as
    /// one plain loop per element, on shapes that cut tiles and blocks at every edge.
    #[test]
    fn gram_tiles_keep_the_documented_order() {
        for (n, p) in [(1, 1), (7, 3), (70, 13), (131, 37), (200, 8)] {
            let z = values(n * p, (n * 1000 + p) as u64);
            let g = gram(&z, n, p);
            for i in 0..p {
                for j in i..p {
                    let mut s = 0.0;
                    for r in (0..n / 4 * 4).step_by(4) {
                        let v = |k: usize, c: usize| z[(r + k) * p + c];
                        s += (v(0, i) * v(0, j) + v(1, i) * v(1, j))
                            + (v(2, i) * v(2, j) + v(3, i) * v(3, j));
                    }
                    for r in n / 4 * 4..n {
                        s += z[r * p + i] * z[r * p + j];
                    }
                    assert_eq!(g[i * p + j].to_bits(), s.to_bits(), "{n} x {p}: ({i}, {j})");
                    assert_eq!(g[j * p + i].to_bits(), s.to_bits());
                }
            }
        }
    }

    /// The blocks and tiles of [`cholesky`] must not change a bit: compare with the unblocked two-pivot form.
    #[test]
    fn cholesky_blocks_keep_the_pair_order() {
        for p in [1, 2, 5, 33, 64, 71] {
            let z = values((p + 3) * p, p as u64);
            let mut a = gram(&z, p + 3, p);
            for i in 0..p {
                a[i * p + i] += 0.5;
            }
            let mut u = a.clone();
            let mut k = 0;
            while k < p {
                let d = u[k * p + k].sqrt();
                u[k * p + k] = d;
                for v in &mut u[k * p + k + 1..(k + 1) * p] {
                    *v /= d;
                }
                if k + 1 == p {
                    break;
                }
                for j in k + 1..p {
                    u[(k + 1) * p + j] += -u[k * p + k + 1] * u[k * p + j];
                }
                let d = u[(k + 1) * p + k + 1].sqrt();
                u[(k + 1) * p + k + 1] = d;
                for v in &mut u[(k + 1) * p + k + 2..(k + 2) * p] {
                    *v /= d;
                }
                for i in k + 2..p {
                    let (f0, f1) = (u[k * p + i], u[(k + 1) * p + i]);
                    for j in i..p {
                        u[i * p + j] -= f0 * u[k * p + j] + f1 * u[(k + 1) * p + j];
                    }
                }
                k += 2;
            }
            let blocked = cholesky(&a, p).unwrap();
            for i in 0..p {
                for j in i..p {
                    assert_eq!(
                        blocked[i * p + j].to_bits(),
                        u[i * p + j].to_bits(),
                        "{p}: ({i}, {j})"
                    );
                }
            }
        }
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

    /// `dot_wide` adds in the order its documentation states (sums by index mod 16, folded in halves, then the
    /// tail), bit for bit, at lengths with and without a tail; and on small integers it is exact.
    #[test]
    fn wide_dot_product_adds_in_its_documented_order() {
        for n in [0, 1, 15, 16, 17, 37, 100] {
            let a: Vec<f64> = (0..n).map(|i| (i as f64 * 0.731).sin() * 1e3).collect();
            let b: Vec<f64> = (0..n).map(|i| (i as f64 * 1.37).cos() / 7.0).collect();
            let full = n / 16 * 16;
            let mut s = [0.0f64; 16];
            for i in 0..full {
                s[i % 16] += a[i] * b[i];
            }
            let s8: Vec<f64> = (0..8).map(|l| s[l] + s[l + 8]).collect();
            let s4: Vec<f64> = (0..4).map(|l| s8[l] + s8[l + 4]).collect();
            let s2 = [s4[0] + s4[2], s4[1] + s4[3]];
            let mut expected = s2[0] + s2[1];
            for i in full..n {
                expected += a[i] * b[i];
            }
            assert_eq!(dot_wide(&a, &b).to_bits(), expected.to_bits(), "length {n}");
        }
        let ints: Vec<f64> = (1..=50).map(f64::from).collect();
        // Σ i² for i = 1..50 = 50·51·101/6.
        assert_eq!(dot_wide(&ints, &ints), 42925.0);
    }

    /// [`dot_single`] in its documented order (on a processor with AVX2, its AVX2 copy: the test then checks that
    /// the copy keeps the order of the portable code, the one the page's WebAssembly runs).
    #[test]
    fn single_dot_product_adds_in_its_documented_order() {
        for n in [0, 1, 31, 32, 33, 77, 100, 1001] {
            let a: Vec<f32> = (0..n).map(|i| (i as f32 * 0.731).sin() * 1e3).collect();
            let b: Vec<f32> = (0..n).map(|i| (i as f32 * 1.37).cos() / 7.0).collect();
            let full = n / 32 * 32;
            let mut s = [0.0f32; 32];
            for i in 0..full {
                s[i % 32] += a[i] * b[i];
            }
            let mut width = 32;
            while width > 1 {
                width /= 2;
                for l in 0..width {
                    s[l] += s[l + width];
                }
            }
            let mut expected = s[0];
            for i in full..n {
                expected += a[i] * b[i];
            }
            assert_eq!(
                dot_single(&a, &b).to_bits(),
                expected.to_bits(),
                "length {n}"
            );
        }
        let ints: Vec<f32> = (1..=50).map(|i| i as f32).collect();
        assert_eq!(dot_single(&ints, &ints), 42925.0);
    }

    /// A factor kept in single precision solves as its values widened to double do, bit for bit, and a double
    /// factor solves as before the solve took either (`axpy` and `dot`'s operations).
    #[test]
    fn a_single_precision_factor_solves_as_its_widened_values() {
        let a = [4.0, 2.0, 0.5, 2.0, 3.0, 0.25, 0.5, 0.25, 2.0];
        let u = cholesky(&a, 3).unwrap();
        let u32: Vec<f32> = u.iter().map(|&v| v as f32).collect();
        let widened: Vec<f64> = u32.iter().map(|&v| f64::from(v)).collect();
        let (mut b32, mut b64) = (vec![1.0, -2.0, 0.3], vec![1.0, -2.0, 0.3]);
        cholesky_solve(&u32, 3, &mut b32);
        cholesky_solve(&widened, 3, &mut b64);
        assert_eq!(b32, b64);
        let mut b = vec![1.0, -2.0, 0.3];
        cholesky_solve(&u, 3, &mut b);
        let mut by_hand = vec![1.0, -2.0, 0.3];
        for i in 0..3 {
            by_hand[i] /= u[i * 3 + i];
            let (head, tail) = by_hand.split_at_mut(i + 1);
            axpy(-head[i], &u[i * 3 + i + 1..(i + 1) * 3], tail);
        }
        for i in (0..3).rev() {
            let s = by_hand[i] - dot(&u[i * 3 + i + 1..(i + 1) * 3], &by_hand[i + 1..]);
            by_hand[i] = s / u[i * 3 + i];
        }
        assert_eq!(b, by_hand);
        // And it is a solution: A·x = b to the single factor's precision.
        for r in 0..3 {
            let ax: f64 = (0..3).map(|k| a[r * 3 + k] * b32[k]).sum();
            assert!((ax - [1.0, -2.0, 0.3][r]).abs() < 1e-5, "row {r}: {ax}");
        }
    }

    #[test]
    fn rank_one_update_in_single_precision_matches_refactoring() {
        // A = [[4, 2], [2, 3]], x = (1, 2): A + xxᵀ = [[5, 4], [4, 7]].
        let mut u: Vec<f32> = cholesky(&[4.0, 2.0, 2.0, 3.0], 2)
            .unwrap()
            .iter()
            .map(|&v| v as f32)
            .collect();
        assert!(cholesky_rank_one(&mut u, 2, &mut [1.0f32, 2.0], 1.0));
        let direct = cholesky(&[5.0, 4.0, 4.0, 7.0], 2).unwrap();
        assert!(
            u.iter()
                .zip(&direct)
                .all(|(a, b)| (f64::from(*a) - b).abs() < 1e-6),
            "{u:?} vs {direct:?}"
        );
        let mut eye = [1.0f32, 0.0, 0.0, 1.0];
        assert!(!cholesky_rank_one(&mut eye, 2, &mut [2.0f32, 0.0], -1.0));
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
