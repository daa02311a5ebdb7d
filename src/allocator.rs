//! How the binary asks glibc's allocator to hand large buffers back. By default glibc raises
//! its mmap threshold to the size of each large block freed (up to 32 MiB), so after the
//! first fold's buffers are freed, later buffers of a few MiB come from the heap arenas of
//! the worker threads and stay resident after they are freed: on the benchmark set that
//! alone added about 40 MiB to the peak of `assess`. A fixed threshold keeps every block of
//! 128 KiB or more in its own mapping, returned to the system when it is freed.

/// glibc's own default threshold (128 KiB), fixed so it no longer moves.
const MMAP_THRESHOLD: i32 = 128 * 1024;

/// Fixes the threshold; call once, before any thread starts. Elsewhere than glibc it does
/// nothing.
pub fn fix_mmap_threshold() {
    #[cfg(all(target_os = "linux", target_env = "gnu"))]
    // SAFETY: mallopt only sets an allocator parameter; called before other threads exist.
    unsafe {
        libc::mallopt(libc::M_MMAP_THRESHOLD, MMAP_THRESHOLD);
    }
}
