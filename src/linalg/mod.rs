//! Single-precision matrix products for the exact neighbour search and the linear probe.
//!
//! Both spend most of their time in f32 products of a few hundred rows by a few hundred
//! columns, called from inside rayon workers (so each product runs on one thread). On an
//! x86-64 CPU with AVX-512F the product runs a register-blocked kernel written for that
//! instruction set ([`avx512_tile`]): `matrixmultiply`, the portable fallback, stops at
//! AVX2/FMA, half the vector width. Elsewhere, or when the CPU lacks AVX-512F, the product is
//! `ndarray`'s (`matrixmultiply`).
//!
//! Summation order is fixed by the shapes alone: each output is summed over the inner
//! dimension in ascending order within blocks of [`KC`], and the blocks in ascending order, so
//! a product gives the same bits on any thread count (it never splits work across threads).
//! It may differ in the last bits from the fallback's, and from one CPU kind to another.

#[cfg(target_arch = "x86_64")]
mod avx512_tile;
#[cfg(target_arch = "x86_64")]
mod avx_transpose_pack;
#[cfg(target_arch = "x86_64")]
mod blocked;
#[cfg(target_arch = "x86_64")]
mod operand;

use ndarray::linalg::general_mat_mul;
use ndarray::{Array2, ArrayView2, ArrayViewMut2};

/// Inner-dimension block: a packed `KC × NR` panel of `b` (32 KiB) stays in a 48 KiB L1 cache
/// while the packed rows of `a` stream past it.
const KC: usize = 256;
/// Rows of `a` packed at a time (a multiple of the tile's 12 rows, and at least the 256-row
/// blocks the callers use, so their `a` is packed once per inner block): 264 KiB, in L2.
const MC: usize = 264;
/// Columns of `b` packed at a time: the neighbour search's 2048-row base block, 2 MiB.
const NC: usize = 2048;

/// Bytes of packing buffers a thread holds after an `m × k` by `k × n` product on the
/// AVX-512 kernel (it keeps them for its next product); an upper bound for the portable one.
pub fn scratch_bytes(m: usize, n: usize, k: usize) -> u64 {
    let (mc, nc, kc) = (m.min(MC), n.min(NC), k.min(KC));
    // Either orientation may be packed (see `blocked::product`); count the larger.
    let rows = mc.div_ceil(12) * 12 + nc.div_ceil(32) * 32;
    let cols = nc.div_ceil(12) * 12 + mc.div_ceil(32) * 32;
    ((rows.max(cols) * kc + 32) * 4) as u64
}

/// Which kernel [`sgemm`] runs on this machine.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kernel {
    /// The AVX-512F register-blocked kernel.
    Avx512,
    /// `matrixmultiply` through `ndarray` (AVX2/FMA where present).
    Portable,
}

impl Kernel {
    /// The fastest kernel this CPU supports.
    pub fn detect() -> Kernel {
        #[cfg(target_arch = "x86_64")]
        {
            if std::arch::is_x86_feature_detected!("avx512f") {
                return Kernel::Avx512;
            }
        }
        Kernel::Portable
    }
}

/// `c = a · b`, or `c += a · b` with `accumulate`, on the fastest kernel this CPU supports.
/// Panics only if the shapes disagree (a bug in the caller, never an input's fault).
pub fn sgemm(
    a: ArrayView2<'_, f32>,
    b: ArrayView2<'_, f32>,
    c: &mut ArrayViewMut2<'_, f32>,
    accumulate: bool,
) {
    sgemm_with(Kernel::detect(), a, b, c, accumulate);
}

/// [`sgemm`] on a given kernel; asking for [`Kernel::Avx512`] on a CPU without AVX-512F runs
/// the portable one. Public so that tests and benchmarks can compare the two.
pub fn sgemm_with(
    kernel: Kernel,
    a: ArrayView2<'_, f32>,
    b: ArrayView2<'_, f32>,
    c: &mut ArrayViewMut2<'_, f32>,
    accumulate: bool,
) {
    let (m, k) = a.dim();
    let (k2, n) = b.dim();
    assert!(
        k == k2 && c.dim() == (m, n),
        "sgemm shapes: {m}×{k} · {k2}×{n} into {:?}",
        c.dim()
    );
    let beta = if accumulate { 1.0 } else { 0.0 };
    if kernel == Kernel::Portable || Kernel::detect() == Kernel::Portable {
        general_mat_mul(1.0, &a, &b, beta, c);
        return;
    }
    blocked_product(a, b, c, accumulate);
}

#[cfg(not(target_arch = "x86_64"))]
fn blocked_product(
    a: ArrayView2<'_, f32>,
    b: ArrayView2<'_, f32>,
    c: &mut ArrayViewMut2<'_, f32>,
    accumulate: bool,
) {
    // Unreachable: `Kernel::detect` is always `Portable` off x86-64.
    general_mat_mul(1.0, &a, &b, if accumulate { 1.0 } else { 0.0 }, c);
}

/// The AVX-512 path, once `sgemm_with` has checked the CPU.
#[cfg(target_arch = "x86_64")]
fn blocked_product(
    a: ArrayView2<'_, f32>,
    b: ArrayView2<'_, f32>,
    c: &mut ArrayViewMut2<'_, f32>,
    accumulate: bool,
) {
    let (m, k) = a.dim();
    let n = b.ncols();
    if m == 0 || n == 0 {
        return;
    }
    if k == 0 {
        if !accumulate {
            c.fill(0.0);
        }
        return;
    }
    let (Some(a_op), Some(b_op)) = (operand::Operand::of(&a), operand::Operand::of(&b)) else {
        // Neither row- nor column-contiguous (a sliced step): pack from a standard copy.
        let a = a.as_standard_layout();
        let b = b.as_standard_layout();
        blocked_product(a.view(), b.view(), c, accumulate);
        return;
    };
    if let Some(mut out) = operand::OperandMut::of(c) {
        blocked::product(a_op, b_op, &mut out, accumulate);
        return;
    }
    // An output that is not contiguous along either axis: compute into a standard array.
    let mut tmp = if accumulate {
        c.to_owned()
    } else {
        Array2::zeros((m, n))
    };
    let mut view = tmp.view_mut();
    let mut out = operand::OperandMut::of(&mut view).expect("a standard array is contiguous");
    blocked::product(a_op, b_op, &mut out, accumulate);
    c.assign(&tmp);
}

#[cfg(test)]
mod tests;
