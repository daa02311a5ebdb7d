//! The blocked product around the AVX-512 tile: `b` packed `KC × NC` at a time into panels of
//! `NR` columns, `a` packed `MC × KC` at a time into panels of `MR` rows, and every pair of
//! panels multiplied by [`tile`]. A packed `b` panel (32 KiB) stays in L1 while the packed
//! `a` block (264 KiB) streams from L2.
//!
//! Tiles at the edges are padded with zeros in the packed panels and written through a
//! small buffer, so any shape and any contiguous layout (row- or column-major) is accepted.

use std::cell::RefCell;

use super::avx_transpose_pack::{pack_columns, pack_rows};
use super::avx512_tile::{MR, NR, tile};
use super::operand::{Operand, OperandMut};
use super::{KC, MC, NC};

thread_local! {
    /// Each thread's packing buffers, kept between products (`scratch_bytes` counts them).
    static SCRATCH: RefCell<(Vec<f32>, Vec<f32>)> = const { RefCell::new((Vec::new(), Vec::new())) };
}

/// `c = a · b` (or `c += a · b`), with `c` contiguous along one axis. Must run only where the
/// CPU has AVX-512F.
pub(super) fn product(a: Operand<'_>, b: Operand<'_>, c: &mut OperandMut<'_>, accumulate: bool) {
    let (m, n) = (a.rows, b.cols);
    // Tiles are written a row of NR at a time, so the orientation whose output rows are
    // contiguous is taken: cᵀ = bᵀ aᵀ for a column-major c. For an output contiguous along
    // neither axis, the one that pads less. Decided by the shape and layout alone.
    let transpose = if c.cs == 1 {
        false
    } else if c.rs == 1 {
        true
    } else {
        padded(n, m) < padded(m, n)
    };
    if transpose {
        let mut ct = OperandMut {
            data: &mut *c.data,
            rows: c.cols,
            cols: c.rows,
            rs: c.cs,
            cs: c.rs,
        };
        run(b.t(), a.t(), &mut ct, accumulate);
    } else {
        run(a, b, c, accumulate);
    }
}

fn padded(m: usize, n: usize) -> usize {
    m.div_ceil(MR) * MR * n.div_ceil(NR) * NR
}

fn run(a: Operand<'_>, b: Operand<'_>, c: &mut OperandMut<'_>, accumulate: bool) {
    let (m, k, n) = (a.rows, a.cols, b.cols);
    SCRATCH.with(|cell| {
        let mut guard = cell.borrow_mut();
        let (abuf, bbuf) = &mut *guard;
        for jc in (0..n).step_by(NC) {
            let nc = NC.min(n - jc);
            for pc in (0..k).step_by(KC) {
                let kc = KC.min(k - pc);
                let bpack = aligned(bbuf, nc.div_ceil(NR) * NR * kc);
                pack_b(&b, pc, kc, jc, nc, bpack);
                for ic in (0..m).step_by(MC) {
                    let mc = MC.min(m - ic);
                    let apack = aligned(abuf, mc.div_ceil(MR) * MR * kc);
                    pack_a(&a, ic, mc, pc, kc, apack);
                    let add = accumulate || pc > 0;
                    for (r, ap) in apack.chunks_exact(kc * MR).enumerate() {
                        for (q, bp) in bpack.chunks_exact(kc * NR).enumerate() {
                            let (i0, j0) = (ic + r * MR, jc + q * NR);
                            store_tile(kc, ap, bp, c, i0, j0, add);
                        }
                    }
                }
            }
        }
    });
}

/// `len` floats of `buf` starting at a 64-byte boundary, so each vector load of a packed
/// `b` panel stays within one cache line.
fn aligned(buf: &mut Vec<f32>, len: usize) -> &mut [f32] {
    if buf.len() < len + 16 {
        buf.resize(len + 16, 0.0);
    }
    let off = buf.as_ptr().align_offset(64).min(16);
    &mut buf[off..off + len]
}

/// Packs rows `i0..i0+mc`, columns `p0..p0+kc` of `a` as panels of `MR` rows: panel `r`,
/// step `p`, row `i` at `r·kc·MR + p·MR + i`; rows past `mc` are zero.
fn pack_a(a: &Operand<'_>, i0: usize, mc: usize, p0: usize, kc: usize, out: &mut [f32]) {
    for (r, panel) in out.chunks_exact_mut(kc * MR).enumerate() {
        let rows = MR.min(mc - r * MR);
        if a.cs == 1 && rows == MR {
            // SAFETY: `product` runs only after `Kernel::detect` found AVX-512F.
            unsafe { pack_rows(a.data, a.rs, i0 + r * MR, p0, kc, panel) };
            continue;
        }
        if rows < MR {
            panel.fill(0.0);
        }
        for i in 0..rows {
            let base = (i0 + r * MR + i) * a.rs + p0 * a.cs;
            for (p, slot) in panel.iter_mut().skip(i).step_by(MR).enumerate() {
                *slot = a.data[base + p * a.cs];
            }
        }
    }
}

/// Packs rows `p0..p0+kc`, columns `j0..j0+nc` of `b` as panels of `NR` columns: panel `q`,
/// step `p`, column `j` at `q·kc·NR + p·NR + j`; columns past `nc` are zero.
fn pack_b(b: &Operand<'_>, p0: usize, kc: usize, j0: usize, nc: usize, out: &mut [f32]) {
    for (q, panel) in out.chunks_exact_mut(kc * NR).enumerate() {
        let cols = NR.min(nc - q * NR);
        if cols < NR {
            panel.fill(0.0);
        }
        if b.rs == 1 && cols == NR {
            // SAFETY: `product` runs only after `Kernel::detect` found AVX-512F.
            unsafe { pack_columns(b.data, b.cs, p0, kc, j0 + q * NR, panel) };
        } else if b.cs == 1 {
            for (p, dst) in panel.chunks_exact_mut(NR).enumerate() {
                let s = (p0 + p) * b.rs + j0 + q * NR;
                dst[..cols].copy_from_slice(&b.data[s..s + cols]);
            }
        } else {
            for j in 0..cols {
                let base = p0 * b.rs + (j0 + q * NR + j) * b.cs;
                for (p, slot) in panel.iter_mut().skip(j).step_by(NR).enumerate() {
                    *slot = b.data[base + p * b.rs];
                }
            }
        }
    }
}

/// One tile of `c` at (i0, j0): straight into `c` when it is whole and `c`'s rows are
/// contiguous, else through a buffer that holds only the part inside `c`.
fn store_tile(
    kc: usize,
    ap: &[f32],
    bp: &[f32],
    c: &mut OperandMut<'_>,
    i0: usize,
    j0: usize,
    accumulate: bool,
) {
    let rows = MR.min(c.rows - i0);
    let cols = NR.min(c.cols - j0);
    if rows == MR && cols == NR && c.cs == 1 {
        let start = i0 * c.rs + j0;
        let end = start + (MR - 1) * c.rs + NR;
        // SAFETY: `product` runs only after `Kernel::detect` found AVX-512F.
        unsafe { tile(kc, ap, bp, &mut c.data[start..end], c.rs, accumulate) };
        return;
    }
    let mut buf = [0f32; MR * NR];
    if accumulate {
        for i in 0..rows {
            for j in 0..cols {
                buf[i * NR + j] = c.data[(i0 + i) * c.rs + (j0 + j) * c.cs];
            }
        }
    }
    // SAFETY: as above.
    unsafe { tile(kc, ap, bp, &mut buf, NR, accumulate) };
    for i in 0..rows {
        for j in 0..cols {
            c.data[(i0 + i) * c.rs + (j0 + j) * c.cs] = buf[i * NR + j];
        }
    }
}
