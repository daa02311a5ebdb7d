//! Packing a column-major `b` (each column contiguous along the inner dimension, as for
//! `rowsᵀ` in `rows · otherᵀ`) and a row-major `a` into the tile's interleaved panels, eight
//! by eight with in-register transposes. The scalar loop it replaces wrote one float per step with a long
//! stride and took a third as long as the products themselves in the neighbour search.

use std::arch::x86_64::{
    __m256, _mm_storeu_ps, _mm256_castps256_ps128, _mm256_loadu_ps, _mm256_permute2f128_ps,
    _mm256_shuffle_ps, _mm256_storeu_ps, _mm256_unpackhi_ps, _mm256_unpacklo_ps,
};

use super::avx512_tile::{MR, NR};

/// Writes `panel[p · NR + j] = src[(p0 + p) + (j0 + j) · cs]` for `p < kc`, `j < NR`.
///
/// # Safety
/// The CPU must support AVX (implied by the AVX-512F the caller checked). Every memory access
/// goes through a bounds-checked slice, so no input can make it read or write out of bounds.
#[target_feature(enable = "avx512f")]
pub(super) unsafe fn pack_columns(
    src: &[f32],
    cs: usize,
    p0: usize,
    kc: usize,
    j0: usize,
    panel: &mut [f32],
) {
    let whole = kc / 8 * 8;
    for jb in (0..NR).step_by(8) {
        for pb in (0..whole).step_by(8) {
            let mut r = [_mm256_setzero(); 8];
            for (t, v) in r.iter_mut().enumerate() {
                let s = p0 + pb + (j0 + jb + t) * cs;
                let col = &src[s..s + 8];
                // SAFETY: `col` holds the 8 floats read.
                *v = unsafe { _mm256_loadu_ps(col.as_ptr()) };
            }
            let r = transpose8(r);
            for (u, v) in r.iter().enumerate() {
                let o = (pb + u) * NR + jb;
                let dst = &mut panel[o..o + 8];
                // SAFETY: `dst` holds the 8 floats written.
                unsafe { _mm256_storeu_ps(dst.as_mut_ptr(), *v) };
            }
        }
        for p in whole..kc {
            for j in jb..jb + 8 {
                panel[p * NR + j] = src[p0 + p + (j0 + j) * cs];
            }
        }
    }
}

/// Writes `panel[p · MR + i] = src[(i0 + i) · rs + p0 + p]` for `p < kc`, `i < MR`: the
/// packed panel of a row-major `a`. Rows 0–7 are transposed eight by eight; rows 8–11 as
/// an 8 × 8 block whose last four rows are zero, keeping the first four lanes.
///
/// # Safety
/// As [`pack_columns`].
#[target_feature(enable = "avx512f")]
pub(super) unsafe fn pack_rows(
    src: &[f32],
    rs: usize,
    i0: usize,
    p0: usize,
    kc: usize,
    panel: &mut [f32],
) {
    const _: () = assert!(MR == 12);
    let whole = kc / 8 * 8;
    for pb in (0..whole).step_by(8) {
        for ib in [0, 8] {
            let mut r = [_mm256_setzero(); 8];
            for (t, v) in r.iter_mut().enumerate().take(MR - ib) {
                let s = (i0 + ib + t) * rs + p0 + pb;
                let row = &src[s..s + 8];
                // SAFETY: `row` holds the 8 floats read.
                *v = unsafe { _mm256_loadu_ps(row.as_ptr()) };
            }
            let r = transpose8(r);
            for (u, v) in r.iter().enumerate() {
                let o = (pb + u) * MR + ib;
                if ib == 0 {
                    let dst = &mut panel[o..o + 8];
                    // SAFETY: `dst` holds the 8 floats written.
                    unsafe { _mm256_storeu_ps(dst.as_mut_ptr(), *v) };
                } else {
                    let dst = &mut panel[o..o + 4];
                    // SAFETY: `dst` holds the 4 floats written.
                    unsafe { _mm_storeu_ps(dst.as_mut_ptr(), _mm256_castps256_ps128(*v)) };
                }
            }
        }
    }
    for p in whole..kc {
        for i in 0..MR {
            panel[p * MR + i] = src[(i0 + i) * rs + p0 + p];
        }
    }
}

#[target_feature(enable = "avx512f")]
fn _mm256_setzero() -> __m256 {
    std::arch::x86_64::_mm256_setzero_ps()
}

/// Row `u` of the result is column `u` of the 8 × 8 block held by `r` (rows).
#[target_feature(enable = "avx512f")]
fn transpose8(r: [__m256; 8]) -> [__m256; 8] {
    let t0 = _mm256_unpacklo_ps(r[0], r[1]);
    let t1 = _mm256_unpackhi_ps(r[0], r[1]);
    let t2 = _mm256_unpacklo_ps(r[2], r[3]);
    let t3 = _mm256_unpackhi_ps(r[2], r[3]);
    let t4 = _mm256_unpacklo_ps(r[4], r[5]);
    let t5 = _mm256_unpackhi_ps(r[4], r[5]);
    let t6 = _mm256_unpacklo_ps(r[6], r[7]);
    let t7 = _mm256_unpackhi_ps(r[6], r[7]);
    let s0 = _mm256_shuffle_ps::<0x44>(t0, t2);
    let s1 = _mm256_shuffle_ps::<0xEE>(t0, t2);
    let s2 = _mm256_shuffle_ps::<0x44>(t1, t3);
    let s3 = _mm256_shuffle_ps::<0xEE>(t1, t3);
    let s4 = _mm256_shuffle_ps::<0x44>(t4, t6);
    let s5 = _mm256_shuffle_ps::<0xEE>(t4, t6);
    let s6 = _mm256_shuffle_ps::<0x44>(t5, t7);
    let s7 = _mm256_shuffle_ps::<0xEE>(t5, t7);
    [
        _mm256_permute2f128_ps::<0x20>(s0, s4),
        _mm256_permute2f128_ps::<0x20>(s1, s5),
        _mm256_permute2f128_ps::<0x20>(s2, s6),
        _mm256_permute2f128_ps::<0x20>(s3, s7),
        _mm256_permute2f128_ps::<0x31>(s0, s4),
        _mm256_permute2f128_ps::<0x31>(s1, s5),
        _mm256_permute2f128_ps::<0x31>(s2, s6),
        _mm256_permute2f128_ps::<0x31>(s3, s7),
    ]
}
