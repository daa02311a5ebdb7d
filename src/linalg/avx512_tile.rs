//! The AVX-512F micro-kernel: one `MR × NR` tile of the product from a packed panel of `a`
//! (`MR` rows, interleaved by column) and a packed panel of `b` (`NR` columns, interleaved by
//! row).
//!
//! Why this shape: AVX-512 has 32 vector registers of 16 lanes. `MR = 12` rows by `NR = 32`
//! columns (two vectors) keeps 24 accumulators, the two `b` vectors and a broadcast in
//! registers with room to spare, and each step issues 24 independent FMAs for 2 vector loads
//! and 12 broadcasts, enough to keep both FMA ports busy past their latency.

use std::arch::x86_64::{
    __m512, _mm512_fmadd_ps, _mm512_loadu_ps, _mm512_set1_ps, _mm512_setzero_ps, _mm512_storeu_ps,
};

/// Rows of a tile.
pub(super) const MR: usize = 12;
/// Columns of a tile (two vectors of 16 lanes).
pub(super) const NR: usize = 32;

/// Writes the tile `a_panel · b_panel` over `kc` inner steps into `out` (row `i` of the tile
/// at `out[i * rso..i * rso + NR]`), or adds it to what `out` holds with `accumulate`.
///
/// Each output is summed in ascending inner index with one FMA per step, starting from 0 or
/// from `out`'s value, so the bits depend only on the inputs.
///
/// # Safety
/// The CPU must support AVX-512F (the caller checked `is_x86_feature_detected!`).
#[target_feature(enable = "avx512f")]
pub(super) unsafe fn tile(
    kc: usize,
    a_panel: &[f32],
    b_panel: &[f32],
    out: &mut [f32],
    rso: usize,
    accumulate: bool,
) {
    assert!(a_panel.len() >= kc * MR && b_panel.len() >= kc * NR);
    assert!(rso >= NR && out.len() >= (MR - 1) * rso + NR);
    let a = a_panel.as_ptr();
    let b = b_panel.as_ptr();
    let o = out.as_mut_ptr();
    let mut acc: [[__m512; 2]; MR] = [[_mm512_setzero_ps(); 2]; MR];
    if accumulate {
        for (i, row) in acc.iter_mut().enumerate() {
            // SAFETY: i < MR, so the 32 floats read end at (MR − 1)·rso + NR ≤ out.len().
            unsafe {
                row[0] = _mm512_loadu_ps(o.add(i * rso));
                row[1] = _mm512_loadu_ps(o.add(i * rso + 16));
            }
        }
    }
    for p in 0..kc {
        // SAFETY: p < kc, so b reads end at kc·NR and a reads at kc·MR, within the asserted
        // panel lengths.
        let (b0, b1) = unsafe {
            (
                _mm512_loadu_ps(b.add(p * NR)),
                _mm512_loadu_ps(b.add(p * NR + 16)),
            )
        };
        for (i, row) in acc.iter_mut().enumerate() {
            // SAFETY: as above, p·MR + i < kc·MR.
            let ai = _mm512_set1_ps(unsafe { *a.add(p * MR + i) });
            row[0] = _mm512_fmadd_ps(ai, b0, row[0]);
            row[1] = _mm512_fmadd_ps(ai, b1, row[1]);
        }
    }
    for (i, row) in acc.iter().enumerate() {
        // SAFETY: the same bound as the loads above.
        unsafe {
            _mm512_storeu_ps(o.add(i * rso), row[0]);
            _mm512_storeu_ps(o.add(i * rso + 16), row[1]);
        }
    }
}
