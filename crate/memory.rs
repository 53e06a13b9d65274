//! Keeping freed memory for reuse in the native faces' processes (glibc builds; call once at start).
//!
//! glibc's allocator hands large freed blocks back to the system: every block above its mmap threshold is unmapped
//! when freed, and the top of the heap is trimmed once more than 128 kB is free. An analysis allocates and frees the
//! same p × p matrices fold after fold, so each of them came back as fresh pages, one page fault per 4 kB: measured
//! with `perf`, a third of shrinkage LDA's time at 1000 trials × 400 neurons went to the kernel's page faults.
//! Raising both limits keeps the blocks in the process for the next fold; it cannot change a number. The statically
//! linked (musl) build uses dlmalloc for the same reason (Cargo.toml), and WebAssembly's allocator never returns
//! memory at all.

/// Ask glibc to keep freed blocks of up to 32 MB (its largest mmap threshold) and up to 1 GB of free heap.
pub fn keep_freed_memory() {
    #[cfg(all(target_os = "linux", target_env = "gnu"))]
    // SAFETY: mallopt only sets allocator parameters; it is called before any thread starts.
    unsafe {
        libc::mallopt(libc::M_MMAP_THRESHOLD, 32 << 20);
        libc::mallopt(libc::M_TRIM_THRESHOLD, 1 << 30);
    }
}
