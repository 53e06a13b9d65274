//! A global allocator that counts live bytes and refuses any allocation beyond a budget.
//!
//! The fuzzer gives each input a budget (a fixed allowance plus a multiple of the input's size, [`with_budget`]):
//! memory must be bounded by what will be decoded, not by what a file claims. An allocation beyond the budget
//! returns null, as an exhausted machine would: code that asks with `try_reserve` gets an error it must turn into a
//! message, and anything else aborts the process ("memory allocation of N bytes failed"), which the fuzzer's
//! supervisor records as a failure with the input that caused it.

use std::alloc::{GlobalAlloc, Layout, System};
use std::sync::atomic::{AtomicUsize, Ordering};

pub struct Counting;

static LIVE: AtomicUsize = AtomicUsize::new(0);
static LIMIT: AtomicUsize = AtomicUsize::new(usize::MAX);

/// Count `n` more live bytes, unless that passes the limit.
fn take(n: usize) -> bool {
    let before = LIVE.fetch_add(n, Ordering::Relaxed);
    if before.saturating_add(n) > LIMIT.load(Ordering::Relaxed) {
        LIVE.fetch_sub(n, Ordering::Relaxed);
        return false;
    }
    true
}

fn give(n: usize) {
    LIVE.fetch_sub(n, Ordering::Relaxed);
}

unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        if !take(layout.size()) {
            return std::ptr::null_mut();
        }
        let p = unsafe { System.alloc(layout) };
        if p.is_null() {
            give(layout.size());
        }
        p
    }

    unsafe fn alloc_zeroed(&self, layout: Layout) -> *mut u8 {
        if !take(layout.size()) {
            return std::ptr::null_mut();
        }
        let p = unsafe { System.alloc_zeroed(layout) };
        if p.is_null() {
            give(layout.size());
        }
        p
    }

    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        unsafe { System.dealloc(ptr, layout) };
        give(layout.size());
    }

    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        let old = layout.size();
        if new_size > old && !take(new_size - old) {
            return std::ptr::null_mut();
        }
        let p = unsafe { System.realloc(ptr, layout, new_size) };
        match (p.is_null(), new_size > old) {
            (true, true) => give(new_size - old),
            (false, false) => give(old - new_size),
            _ => {}
        }
        p
    }
}

/// Bytes an input may hold live at once: 256 MB, plus 1000 bytes for each byte of the input (a spike-events file
/// or an NWB file legitimately describes many more values than it holds), at most 2 GB.
pub fn budget(input_len: usize) -> usize {
    (256usize << 20)
        .saturating_add(input_len.saturating_mul(1000))
        .min(2usize << 30)
}

/// Run `f` with at most `budget` more live bytes than there are now (the limit is lifted again even if `f`
/// unwinds).
pub fn with_budget<R>(budget: usize, f: impl FnOnce() -> R) -> R {
    struct Lift;
    impl Drop for Lift {
        fn drop(&mut self) {
            LIMIT.store(usize::MAX, Ordering::Relaxed);
        }
    }
    LIMIT.store(
        LIVE.load(Ordering::Relaxed).saturating_add(budget),
        Ordering::Relaxed,
    );
    let _lift = Lift;
    f()
}
