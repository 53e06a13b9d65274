//! A request, per thread, to stop work whose result nobody will read.
//!
//! On a cross-origin-isolated page the workers share one memory (`crate/wasm/shared.rs`), and a worker that shares
//! memory cannot be terminated mid-task: it might hold a lock of the shared memory (the allocator's), and every
//! other worker would wait on it for ever. So when the page lets such a worker go (Cancel, or a newer setting that
//! makes its timing task useless), it sets this thread's flag, at the address the worker gave it ([`address`]),
//! and the long loops look at it ([`requested`]): a solver's iterations, a split's folds, a time course's windows.
//! They then end early, leaving unfinished numbers that are never read: the worker throws its whole batch away
//! (www/worker.js; tests/stop.rs). Nothing else sets the flag, so the command line and every other run never see
//! it, and numbers cannot depend on it.

use std::sync::atomic::{AtomicU32, Ordering};

thread_local! {
    static STOP: AtomicU32 = const { AtomicU32::new(0) };
}

/// Whether this thread was asked to stop.
pub fn requested() -> bool {
    STOP.with(|s| s.load(Ordering::Relaxed) != 0)
}

/// The address of this thread's flag in the memory it shares (a 32-bit word; non-zero means stop).
pub fn address() -> usize {
    STOP.with(|s| s as *const AtomicU32 as usize)
}
