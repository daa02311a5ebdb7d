//! How the binary asks glibc's allocator to hand large buffers back. By default glibc raises
//! its mmap threshold to the size of each large block freed (up to 32 MiB), so after the
//! first fold's buffers are freed, later buffers of a few MiB come from the heap arenas of
//! the worker threads and stay resident after they are freed: on the benchmark set that
//! alone added about 40 MiB to the peak of `assess`. A fixed threshold keeps every block at
//! or above it in its own mapping, returned to the system when it is freed.

/// Blocks of this size or more get their own mapping. Measured on the benchmark set's
/// linear-only run (peak RSS, system time): glibc's default start of 128 KiB gave 86 MiB but
/// 23 s of system time (the loss's per-evaluation buffers of 0.2–1 MiB were mapped and
/// unmapped every time), 640 KiB 93 MiB and 7 s, 1 MiB 102 MiB and 3 s, 4 MiB 113 MiB and
/// 1.4 s, glibc's moving threshold 162 MiB and 0.3 s.
const MMAP_THRESHOLD: i32 = 640 * 1024;

/// Fixes the threshold; call once, before any thread starts. A threshold the user set in
/// glibc's own variable `MALLOC_MMAP_THRESHOLD_` is left as it is. Elsewhere than glibc it
/// does nothing.
pub fn fix_mmap_threshold() {
    #[cfg(all(target_os = "linux", target_env = "gnu"))]
    if std::env::var_os("MALLOC_MMAP_THRESHOLD_").is_none() {
        // SAFETY: mallopt only sets an allocator parameter; called before other threads exist.
        unsafe {
            libc::mallopt(libc::M_MMAP_THRESHOLD, MMAP_THRESHOLD);
        }
    }
}
