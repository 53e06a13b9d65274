//! Run-time choice of instruction set for the hot kernels, without changing a number.
//!
//! Native builds target a baseline x86-64 (SSE2), so one binary runs on every x86-64 processor. The kernels that
//! hold the time (Gram products, Cholesky factors and their updates, the linear SVM's row loops, the sums of
//! shrinkage LDA and the nearest-mean decoder) are compiled a second time with AVX2 enabled, and [`multiversion!`]
//! calls that copy when the processor has it. Both copies are the same Rust code: Rust neither fuses a multiply and
//! an add (no `fma` feature is enabled either) nor reorders floating-point operations, so the wider registers do the
//! same IEEE operations in the same order, several at a time, and every result is bit-identical. `tests/cli.rs`
//! checks this on whole analyses by comparing the JSON of both paths.
//!
//! `POPDECODE_SIMD=baseline` in the environment forces the baseline copies (read once, at the first kernel call).

use std::sync::atomic::{AtomicU8, Ordering};

/// 0: not yet decided, 1: baseline, 2: AVX2.
static LEVEL: AtomicU8 = AtomicU8::new(0);

/// Whether the AVX2 copies are used: the processor has AVX2 and `POPDECODE_SIMD` is not `baseline`.
#[inline]
pub fn avx2() -> bool {
    match LEVEL.load(Ordering::Relaxed) {
        0 => {
            let level = if detect() { 2 } else { 1 };
            LEVEL.store(level, Ordering::Relaxed);
            level == 2
        }
        level => level == 2,
    }
}

#[cfg(target_arch = "x86_64")]
fn detect() -> bool {
    std::env::var("POPDECODE_SIMD").map_or(true, |v| v != "baseline")
        && std::arch::is_x86_feature_detected!("avx2")
}

#[cfg(not(target_arch = "x86_64"))]
fn detect() -> bool {
    false
}

/// The instruction set the kernels use in this process, for benchmarks and tests: `"avx2"` or `"baseline"`.
pub fn level_name() -> &'static str {
    if avx2() {
        "avx2"
    } else {
        "baseline"
    }
}

/// Define a function twice, for baseline x86-64 and for AVX2, and call the one the processor allows.
///
/// The body becomes an `#[inline(always)]` function that both copies inline, so helpers it calls that are
/// themselves `#[inline]` (dot products, axpy, tile kernels) are compiled into each copy for its instruction set;
/// a call to a function that is not inlined runs that function's own choice. No generics, no `self`.
macro_rules! multiversion {
    ($(#[$meta:meta])* $vis:vis fn $name:ident($($arg:ident: $ty:ty),* $(,)?) $(-> $ret:ty)? $body:block) => {
        $(#[$meta])*
        $vis fn $name($($arg: $ty),*) $(-> $ret)? {
            #[inline(always)]
            fn body($($arg: $ty),*) $(-> $ret)? $body
            #[cfg(target_arch = "x86_64")]
            {
                #[target_feature(enable = "avx2")]
                unsafe fn wide($($arg: $ty),*) $(-> $ret)? {
                    body($($arg),*)
                }
                if $crate::decoders::simd::avx2() {
                    // SAFETY: `avx2()` is true only when the processor reports AVX2.
                    return unsafe { wide($($arg),*) };
                }
            }
            body($($arg),*)
        }
    };
}
pub(crate) use multiversion;
