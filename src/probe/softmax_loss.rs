//! The objective of the linear probe: weighted mean multinomial cross-entropy plus an L2
//! penalty on the weights (not the biases), with its gradient.
//!
//! The training rows stay in f32 (one or more row blocks, e.g. real rows then synthetic rows,
//! never stacked into a copy). Two evaluations share one definition:
//!
//! - [`Precision::Fast`] folds the column scales into the weights
//!   (`W (x − m)/s = (W/s)(x − m)`), so each block is only centred in f32 and enters two f32
//!   matrix products with no standardised copy; each block's products are added into f64
//!   sums. The softmax runs in f32 with a vectorised exp (`exp_f32.rs`); the per-row loss, the
//!   bias gradient and the block sums are accumulated in f64. This is where the time goes.
//! - [`Precision::Exact`] standardises each block into f64 and multiplies in f64. It is about
//!   three times slower; the tests and the benchmark use it as the reference.
//! - [`Precision::Stepped`] finishes a fit once f32 rounding of the whole logits stops the
//!   line search: it keeps the f64 logits of the last point it saw and adds the change
//!   `ΔW xᵢ + Δb`, an f32 product whose rounding is relative to the step, so near the optimum
//!   the value is accurate far below the line search's resolution at the cost of a `Fast`
//!   evaluation plus an f64 softmax. Only its first evaluation multiplies in f64.
//!
//! Blocks are gathered into a fixed number of groups that depends only on the problem's shape;
//! groups run in parallel (rayon) and their partial sums are added in group order, so the value
//! and gradient are bit-identical for any thread count.

use std::cell::RefCell;
use std::ops::Range;
use std::sync::{Mutex, PoisonError};

use ndarray::linalg::general_mat_mul;
use ndarray::{Array1, Array2, ArrayView1, ArrayView2, ArrayViewMut1, ArrayViewMut2, Axis, s};
use rayon::prelude::*;

use super::exp_f32::exp_shifted;
use crate::data::{Rows, SoftLabel};
use crate::linalg;

/// A stepped evaluation whose change moved the logits by more than this (`Σᵢ cᵢ maxₖ |Δzᵢₖ|`,
/// the row-weighted mean of each row's largest change) recomputes them in f64: the f32
/// product's rounding, about 1e-7 of each change, stays in the kept logits and in the value,
/// so only short steps may add to them. Its signs differ from row to row and mostly cancel
/// in the value: on the benchmark set the stepped phase's steps move the logits by 2e-3 to
/// 1.4e-2 in this measure, and after 5–11 of them the value is within 1e-12 of the f64 one.
const REFRESH_AT: f64 = 0.1;

/// Rows standardised and multiplied at a time.
const BLOCK_ROWS: usize = 256;
/// At most this many groups (parallel work items), each with its own gradient buffer.
const MAX_GROUPS: usize = 16;
/// The groups' gradient buffers together stay under this many bytes (fewer groups for very
/// wide problems).
const GROUP_BUFFER_BYTES: usize = 64 << 20;

/// One block of rows: part index and row range inside that part; `first` is the global row
/// index (into `y`) of its first row.
#[derive(Debug, Clone)]
struct Block {
    part: usize,
    rows: Range<usize>,
    first: usize,
}

/// `L(W, b) = Σᵢ cᵢ ℓᵢ + λ/2 ‖W‖²` where `ℓᵢ = logsumexp(zᵢ) − zᵢ,yᵢ`, `zᵢ = W xᵢ + b`,
/// `xᵢ` the standardised row `(rᵢ − mean) / scale`, and `cᵢ = wᵢ / n` (the class weight of
/// row i over the row count). A row with a soft part (see [`SoftmaxLoss::with_soft`]) has
/// the cross-entropy against its soft target instead:
/// `ℓᵢ = logsumexp(zᵢ) − ωᵢ zᵢ,yᵢ − (1 − ωᵢ) zᵢ,pᵢ`, whose gradient in `zᵢ` is `pᵢ − tᵢ`.
///
/// Parameters are packed `[W row-major (C × d), b (C)]`.
pub(crate) struct SoftmaxLoss<'a> {
    parts: Vec<Rows<'a>>,
    mean: ArrayView1<'a, f64>,
    scale: ArrayView1<'a, f64>,
    y: &'a [u32],
    /// Soft parts aligned with `y`, or empty when every row is hard.
    soft: &'a [Option<SoftLabel>],
    coef: Vec<f64>,
    n_classes: usize,
    l2: f64,
    /// Consecutive runs of blocks; one parallel work item each.
    groups: Vec<Vec<Block>>,
    /// The rows (indices into `y`) each group covers, in order and without gaps.
    group_rows: Vec<Range<usize>>,
    /// What [`Precision::Stepped`] kept from its last evaluation.
    kept: Mutex<Option<KeptLogits>>,
    /// One partial sum per group, reused by every evaluation.
    sums: Mutex<Vec<Partial>>,
}

/// A worker thread's buffers for the group sums, kept between evaluations: allocating them
/// per evaluation had glibc map and trim memory each time, several seconds of system time
/// in a benchmark run of `assess`.
#[derive(Default)]
struct Scratch {
    /// Centred rows of a block, f32.
    xc: Vec<f32>,
    /// Logits or their change, then the gradient in the logits, of a block, f32.
    r: Vec<f32>,
    /// One block's gradient product, f32.
    g: Vec<f32>,
    /// Standardised rows of a block, f64.
    xs: Vec<f64>,
    /// Logits of a block, f64.
    z: Vec<f64>,
}

thread_local! {
    static SCRATCH: RefCell<Scratch> = RefCell::default();
}

/// The first `rows × cols` entries of `v` (grown if needed) as a matrix; the contents are
/// whatever the last user left.
fn grown<T: Clone + Default>(v: &mut Vec<T>, rows: usize, cols: usize) -> ArrayViewMut2<'_, T> {
    let n = rows * cols;
    if v.len() < n {
        v.resize(n, T::default());
    }
    ArrayViewMut2::from_shape((rows, cols), &mut v[..n]).expect("a buffer of rows × cols")
}

/// The logits `zᵢ = W xᵢ + b` of every row (n × C, row-major in the order of `y`) at the
/// parameters `theta`.
struct KeptLogits {
    theta: Vec<f64>,
    z: Vec<f64>,
}

/// How a stepped evaluation gets its logits.
enum Logits<'w> {
    /// From scratch, in f64: standardised rows times `w`, plus `b`.
    Fresh {
        w: ArrayView2<'w, f64>,
        b: &'w [f64],
    },
    /// The kept logits plus the change: `w = ΔW/s` (f32) on centred rows, plus `b = Δb`.
    Change { w: Array2<f32>, b: Vec<f64> },
}

/// Which arithmetic an evaluation uses (see the module notes).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Precision {
    Fast,
    Exact,
    Stepped,
}

/// Partial sums of one group.
struct Partial {
    data_loss: f64,
    g_w: Array2<f64>,
    g_b: Array1<f64>,
    /// `Σᵢ cᵢ maxₖ |Δzᵢₖ|`, how far a step moved the kept logits ([`Precision::Stepped`]).
    change: f64,
}

impl Partial {
    fn zeros(c: usize, d: usize) -> Self {
        Partial {
            data_loss: 0.0,
            g_w: Array2::zeros((c, d)),
            g_b: Array1::zeros(c),
            change: 0.0,
        }
    }

    fn clear(&mut self) {
        self.data_loss = 0.0;
        self.change = 0.0;
        self.g_w.fill(0.0);
        self.g_b.fill(0.0);
    }
}

impl<'a> SoftmaxLoss<'a> {
    /// `parts` are the raw rows, in the order of `y` (part 0's rows first); `mean` and
    /// `scale` the column transform. `class_weight[c]` weighs every row of class c; the
    /// caller guarantees `y[i] < n_classes`, that the parts share one width equal to
    /// `mean.len()`, and that their row counts add up to `y.len()`.
    pub(crate) fn new<'p: 'a, P: Copy + Into<Rows<'p>>>(
        parts: &[P],
        mean: ArrayView1<'a, f64>,
        scale: ArrayView1<'a, f64>,
        y: &'a [u32],
        class_weight: &[f64],
        n_classes: usize,
        l2: f64,
    ) -> Self {
        let n = y.len().max(1) as f64;
        let coef = y.iter().map(|&c| class_weight[c as usize] / n).collect();
        let mut blocks = Vec::new();
        let mut first = 0;
        let parts: Vec<Rows<'a>> = parts.iter().map(|&p| p.into().reborrow()).collect();
        for (p, part) in parts.iter().enumerate() {
            let mut r0 = 0;
            while r0 < part.nrows() {
                let r1 = (r0 + BLOCK_ROWS).min(part.nrows());
                blocks.push(Block {
                    part: p,
                    rows: r0..r1,
                    first,
                });
                first += r1 - r0;
                r0 = r1;
            }
        }
        let d = mean.len();
        let per_group = (n_classes * d + n_classes).max(1) * std::mem::size_of::<f64>();
        let n_groups = (GROUP_BUFFER_BYTES / per_group)
            .clamp(1, MAX_GROUPS)
            .min(blocks.len().max(1));
        let per = blocks.len().div_ceil(n_groups).max(1);
        let groups: Vec<Vec<Block>> = blocks.chunks(per).map(<[Block]>::to_vec).collect();
        let group_rows = groups
            .iter()
            .map(|g| {
                let (first, last) = (&g[0], &g[g.len() - 1]);
                first.first..last.first + last.rows.len()
            })
            .collect();
        SoftmaxLoss {
            parts,
            mean,
            scale,
            y,
            soft: &[],
            coef,
            n_classes,
            l2,
            sums: Mutex::new(
                (0..groups.len())
                    .map(|_| Partial::zeros(n_classes, d))
                    .collect(),
            ),
            groups,
            group_rows,
            kept: Mutex::new(None),
        }
    }

    /// Rows with a soft part train on `weight·e(yᵢ) + (1 − weight)·e(partner)` instead of
    /// `e(yᵢ)`; `soft` is aligned with `y` (the caller checks its length and partner classes),
    /// or empty for none. Hard rows are evaluated exactly as without it.
    pub(crate) fn with_soft(mut self, soft: &'a [Option<SoftLabel>]) -> Self {
        self.soft = soft;
        self
    }

    /// The soft part of global row `i`: its partner class and the shares of its own label
    /// and of the partner.
    fn soft_of(&self, i: usize) -> Option<(usize, f64, f64)> {
        let s = self.soft.get(i).copied().flatten()?;
        let w = f64::from(s.weight);
        Some((s.partner as usize, w, 1.0 - w))
    }

    pub(crate) fn n_params(&self) -> usize {
        self.n_classes * self.mean.len() + self.n_classes
    }

    /// The objective at `theta`, with its gradient written into `grad`, in f64 throughout.
    #[cfg(test)]
    pub(crate) fn value_and_gradient(&self, theta: &[f64], grad: &mut [f64]) -> f64 {
        self.evaluate(theta, grad, Precision::Exact)
    }

    /// The objective at `theta`, with its gradient written into `grad`.
    pub(crate) fn evaluate(&self, theta: &[f64], grad: &mut [f64], precision: Precision) -> f64 {
        let (c, d) = (self.n_classes, self.mean.len());
        let (w_flat, b) = theta.split_at(c * d);
        let w = ArrayView2::from_shape((c, d), w_flat).expect("packed weights match C × d");
        let mut sums = self.sums.lock().unwrap_or_else(PoisonError::into_inner);
        match precision {
            Precision::Exact => self.each_group(&mut sums, |blocks, out, scratch| {
                self.group(blocks, w, b, out, scratch)
            }),
            Precision::Fast => {
                let w_raw = self.unscaled(w.iter().copied());
                self.each_group(&mut sums, |blocks, out, scratch| {
                    self.group_fast(blocks, w_raw.view(), b, out, scratch)
                });
                self.rescale(&mut sums);
            }
            Precision::Stepped => self.stepped(theta, w, b, &mut sums),
        }
        let (g_w, g_b) = grad.split_at_mut(c * d);
        let mut g_w = ndarray::ArrayViewMut2::from_shape((c, d), g_w).expect("C × d");
        g_w.fill(0.0);
        g_b.fill(0.0);
        let mut data_loss = 0.0;
        // Fixed order: the sum does not depend on which thread finished first.
        for p in sums.iter() {
            data_loss += p.data_loss;
            g_w += &p.g_w;
            g_b.iter_mut().zip(&p.g_b).for_each(|(g, s)| *g += s);
        }
        g_w.zip_mut_with(&w, |g, &wv| *g += self.l2 * wv);
        let penalty = 0.5 * self.l2 * w.iter().map(|v| v * v).sum::<f64>();
        data_loss + penalty
    }

    /// Runs `f` on every group (in parallel) with the group's partial sums, cleared, and the
    /// worker thread's buffers.
    fn each_group<F>(&self, sums: &mut [Partial], f: F)
    where
        F: Fn(&[Block], &mut Partial, &mut Scratch) + Sync,
    {
        self.groups
            .par_iter()
            .zip(sums.par_iter_mut())
            .for_each(|(blocks, out)| {
                out.clear();
                SCRATCH.with_borrow_mut(|scratch| f(blocks, out, scratch));
            });
    }

    /// Weights `W/s` in f32, acting on centred rows `x − m` (the same logits as `W` on
    /// standardised rows), from `W` row-major.
    fn unscaled(&self, w: impl Iterator<Item = f64>) -> Array2<f32> {
        let d = self.mean.len();
        let v = w
            .enumerate()
            .map(|(i, v)| (v / self.scale[i % d]) as f32)
            .collect();
        Array2::from_shape_vec((self.n_classes, d), v).expect("C × d weights")
    }

    /// Gradients summed against centred rows back to standardised coordinates:
    /// `∂/∂W_kj = Σᵢ rᵢₖ (xᵢⱼ − mⱼ) / sⱼ`.
    fn rescale(&self, partials: &mut [Partial]) {
        for p in partials {
            for mut row in p.g_w.axis_iter_mut(Axis(0)) {
                row.iter_mut().zip(self.scale).for_each(|(g, s)| *g /= s);
            }
        }
    }

    /// The partial sums at `theta` for [`Precision::Stepped`]; the logits kept from the
    /// previous call move to `theta`.
    fn stepped<'w>(
        &self,
        theta: &[f64],
        w: ArrayView2<'w, f64>,
        b: &'w [f64],
        sums: &mut [Partial],
    ) {
        let c = self.n_classes;
        let mut kept = self.kept.lock().unwrap_or_else(PoisonError::into_inner);
        let logits = match kept.as_ref() {
            Some(k) => {
                let (w0, b0) = k.theta.split_at(w.len());
                Logits::Change {
                    w: self.unscaled(w.iter().zip(w0).map(|(v, v0)| v - v0)),
                    b: b.iter().zip(b0).map(|(v, v0)| v - v0).collect(),
                }
            }
            None => Logits::Fresh { w, b },
        };
        let k = kept.get_or_insert_with(|| KeptLogits {
            theta: Vec::new(),
            z: vec![0.0; self.y.len() * c],
        });
        let pass = |logits: &Logits<'_>, sums: &mut [Partial], z: &mut [f64]| {
            let mut chunks = Vec::with_capacity(self.groups.len());
            let mut rest = z;
            for rows in &self.group_rows {
                let (chunk, tail) = rest.split_at_mut(rows.len() * c);
                chunks.push(chunk);
                rest = tail;
            }
            self.groups
                .par_iter()
                .zip(sums.par_iter_mut())
                .zip(chunks)
                .for_each(|((blocks, out), z)| {
                    out.clear();
                    SCRATCH.with_borrow_mut(|scratch| {
                        self.group_stepped(blocks, z, logits, out, scratch);
                    });
                });
        };
        pass(&logits, sums, &mut k.z);
        if matches!(logits, Logits::Change { .. })
            && sums.iter().map(|p| p.change).sum::<f64>() > REFRESH_AT
        {
            // A long step: its rounding would stay in the kept logits. Start them afresh.
            pass(&Logits::Fresh { w, b }, sums, &mut k.z);
        }
        k.theta.clear();
        k.theta.extend_from_slice(theta);
        self.rescale(sums);
    }

    /// Standardised rows `(x − m)/s` of one block, in f64.
    fn standardise(&self, block: &Block, mut xs: ArrayViewMut2<f64>) {
        let part = &self.parts[block.part];
        for (mut dst, src) in xs
            .outer_iter_mut()
            .zip(block.rows.clone().map(|r| part.row(r)))
        {
            dst.iter_mut()
                .zip(src.iter().zip(self.mean.iter().zip(self.scale)))
                .for_each(|(o, (&v, (mj, sj)))| *o = (f64::from(v) - mj) / sj);
        }
    }

    /// Centred rows `x − m` of one block, in f32 (a subtraction per entry, cheap beside the
    /// products) so large column means do not swamp the logits' rounding.
    #[inline(always)]
    fn centre(&self, block: &Block, mean32: &[f32], mut xc: ArrayViewMut2<f32>) {
        let part = &self.parts[block.part];
        for (mut dst, src) in xc
            .outer_iter_mut()
            .zip(block.rows.clone().map(|r| part.row(r)))
        {
            // On slices the subtraction vectorises; ndarray's element iterators do not.
            match (dst.as_slice_mut(), src.as_slice()) {
                (Some(o), Some(v)) => o
                    .iter_mut()
                    .zip(v.iter().zip(mean32))
                    .for_each(|(o, (&v, &mj))| *o = v - mj),
                _ => dst
                    .iter_mut()
                    .zip(src.iter().zip(mean32))
                    .for_each(|(o, (&v, &mj))| *o = v - mj),
            }
        }
    }

    /// Row `i`'s weighted loss `cᵢ ℓᵢ` from its logits `z`, which become the gradient with
    /// respect to them, `cᵢ (pᵢ − tᵢ)`; f64, one `exp` per class.
    fn loss_and_residual(&self, z: &mut [f64], i: usize) -> f64 {
        let (yi, ci) = (self.y[i] as usize, self.coef[i]);
        let max = z.iter().fold(f64::NEG_INFINITY, |m, &v| m.max(v));
        let soft = self.soft_of(i);
        let target = match soft {
            Some((p, wy, wp)) => wy * (z[yi] - max) + wp * (z[p] - max),
            None => z[yi] - max,
        };
        let mut sum = 0.0;
        for v in z.iter_mut() {
            *v = (*v - max).exp();
            sum += *v;
        }
        let to_grad = ci / sum;
        z.iter_mut().for_each(|v| *v *= to_grad);
        match soft {
            Some((p, wy, wp)) => {
                z[yi] -= ci * wy;
                z[p] -= ci * wp;
            }
            None => z[yi] -= ci,
        }
        ci * (sum.ln() - target)
    }

    /// Partial loss and gradient over one group's blocks for [`Precision::Stepped`]; `z` holds
    /// the group's kept logits and is moved to the new point. The gradient is summed as in
    /// [`SoftmaxLoss::group_fast`] (f32 products per block, added in f64).
    fn group_stepped(
        &self,
        blocks: &[Block],
        z: &mut [f64],
        logits: &Logits<'_>,
        out: &mut Partial,
        scratch: &mut Scratch,
    ) {
        let (c, d) = (self.n_classes, self.mean.len());
        let cap = blocks.iter().map(|b| b.rows.len()).max().unwrap_or(0);
        let Scratch { xc, r, g, xs, .. } = scratch;
        let mut xc_buf = grown(xc, cap, d);
        let mut r_buf = grown(r, cap, c);
        let mut xs_buf = match logits {
            Logits::Fresh { .. } => grown(xs, cap, d),
            Logits::Change { .. } => grown(xs, 0, d),
        };
        let mut g_blk = grown(g, c, d);
        let mean32: Vec<f32> = self.mean.iter().map(|&m| m as f32).collect();
        let start = blocks.first().map_or(0, |b| b.first);
        for block in blocks {
            let m = block.rows.len();
            let mut xc = xc_buf.slice_mut(s![..m, ..]);
            self.centre(block, &mean32, xc.view_mut());
            let at = (block.first - start) * c;
            let mut zb = ArrayViewMut2::from_shape((m, c), &mut z[at..at + m * c])
                .expect("a block's kept logits");
            let mut r = r_buf.slice_mut(s![..m, ..]);
            match logits {
                Logits::Fresh { w, b } => {
                    let mut xs = xs_buf.slice_mut(s![..m, ..]);
                    self.standardise(block, xs.view_mut());
                    general_mat_mul(1.0, &xs, &w.t(), 0.0, &mut zb);
                    for mut row in zb.rows_mut() {
                        row.iter_mut().zip(*b).for_each(|(v, bc)| *v += bc);
                    }
                }
                Logits::Change { w, b } => {
                    linalg::sgemm(xc.view(), w.t(), &mut r, false);
                    let coef = &self.coef[block.first..block.first + m];
                    for ((mut row, dz), ci) in zb.rows_mut().into_iter().zip(r.rows()).zip(coef) {
                        let mut largest = 0.0f64;
                        row.iter_mut()
                            .zip(dz.iter().zip(b))
                            .for_each(|(v, (&dv, db))| {
                                let change = f64::from(dv) + db;
                                largest = largest.max(change.abs());
                                *v += change;
                            });
                        out.change += ci * largest;
                    }
                }
            }
            let mut res = vec![0.0f64; c];
            for ((zi, mut ri), i) in zb.rows().into_iter().zip(r.rows_mut()).zip(block.first..) {
                res.iter_mut().zip(zi).for_each(|(o, &v)| *o = v);
                out.data_loss += self.loss_and_residual(&mut res, i);
                ri.iter_mut().zip(&res).for_each(|(o, &v)| *o = v as f32);
                out.g_b.iter_mut().zip(&res).for_each(|(g, v)| *g += v);
            }
            linalg::sgemm(r.t(), xc.view(), &mut g_blk, false);
            out.g_w.zip_mut_with(&g_blk, |acc, &v| *acc += f64::from(v));
        }
    }

    /// Partial loss and gradient over one group's blocks, in block order.
    fn group(
        &self,
        blocks: &[Block],
        w: ArrayView2<f64>,
        b: &[f64],
        out: &mut Partial,
        scratch: &mut Scratch,
    ) {
        let (c, d) = (self.n_classes, self.mean.len());
        let cap = blocks.iter().map(|b| b.rows.len()).max().unwrap_or(0);
        let mut xs_buf = grown(&mut scratch.xs, cap, d);
        let mut z_buf = grown(&mut scratch.z, cap, c);
        for block in blocks {
            let m = block.rows.len();
            let mut xs = xs_buf.slice_mut(s![..m, ..]);
            self.standardise(block, xs.view_mut());
            let mut z = z_buf.slice_mut(s![..m, ..]);
            general_mat_mul(1.0, &xs, &w.t(), 0.0, &mut z);
            let rows = block.first..block.first + m;
            for (((mut row, &yi), &ci), i) in z
                .axis_iter_mut(Axis(0))
                .zip(&self.y[rows.clone()])
                .zip(&self.coef[rows.clone()])
                .zip(rows)
            {
                row.iter_mut().zip(b).for_each(|(v, bc)| *v += bc);
                // After this the row holds log-probabilities: ℓᵢ = logsumexp(zᵢ) − zᵢ,yᵢ.
                log_softmax_in_place(row.view_mut());
                let soft = self.soft_of(i);
                match soft {
                    None => out.data_loss -= ci * row[yi as usize],
                    Some((p, wy, wp)) => {
                        out.data_loss -= ci * (wy * row[yi as usize] + wp * row[p]);
                    }
                }
                // Gradient of cᵢ ℓᵢ with respect to zᵢ: cᵢ (pᵢ − tᵢ), tᵢ the (soft) target.
                row.mapv_inplace(|lp| ci * lp.exp());
                match soft {
                    None => row[yi as usize] -= ci,
                    Some((p, wy, wp)) => {
                        row[yi as usize] -= ci * wy;
                        row[p] -= ci * wp;
                    }
                }
                out.g_b += &row;
            }
            general_mat_mul(1.0, &z.t(), &xs, 1.0, &mut out.g_w);
        }
    }
}

impl SoftmaxLoss<'_> {
    /// [`SoftmaxLoss::group`] on centred rows with weights `w = W/s` (f32) and biases `b`:
    /// the gradient block is `Σᵢ rᵢ (xᵢ − m)ᵀ`, divided by the scales by the caller.
    ///
    /// Beside the products, the centring and the softmax's `exp` took as long as the products
    /// in the baseline build (four lanes wide); on a CPU with AVX-512 they are compiled
    /// sixteen wide (`group_fast_avx512`). Same operations per element, so the same bits.
    fn group_fast(
        &self,
        blocks: &[Block],
        w: ArrayView2<f32>,
        b: &[f64],
        out: &mut Partial,
        scratch: &mut Scratch,
    ) {
        #[cfg(target_arch = "x86_64")]
        {
            if std::arch::is_x86_feature_detected!("avx512f") {
                // SAFETY: the CPU has AVX-512F, the only requirement of `group_fast_avx512`.
                return unsafe { self.group_fast_avx512(blocks, w, b, out, scratch) };
            }
        }
        self.group_fast_body(blocks, w, b, out, scratch)
    }

    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx512f")]
    fn group_fast_avx512(
        &self,
        blocks: &[Block],
        w: ArrayView2<f32>,
        b: &[f64],
        out: &mut Partial,
        scratch: &mut Scratch,
    ) {
        self.group_fast_body(blocks, w, b, out, scratch)
    }

    #[inline(always)]
    fn group_fast_body(
        &self,
        blocks: &[Block],
        w: ArrayView2<f32>,
        b: &[f64],
        out: &mut Partial,
        scratch: &mut Scratch,
    ) {
        let (c, d) = (self.n_classes, self.mean.len());
        let cap = blocks.iter().map(|b| b.rows.len()).max().unwrap_or(0);
        let Scratch { xc, r, g, .. } = scratch;
        let mut z_buf = grown(r, cap, c);
        let mut xc_buf = grown(xc, cap, d);
        let mean32: Vec<f32> = self.mean.iter().map(|&m| m as f32).collect();
        let mut g_blk = grown(g, c, d);
        let b32: Vec<f32> = b.iter().map(|&v| v as f32).collect();
        let mut e = vec![0.0f32; c];
        for block in blocks {
            let m = block.rows.len();
            let mut xc = xc_buf.slice_mut(s![..m, ..]);
            self.centre(block, &mean32, xc.view_mut());
            let mut z = z_buf.slice_mut(s![..m, ..]);
            linalg::sgemm(xc.view(), w.t(), &mut z, false);
            let rows = block.first..block.first + m;
            for (((mut row, &yi), &ci), i) in z
                .axis_iter_mut(Axis(0))
                .zip(&self.y[rows.clone()])
                .zip(&self.coef[rows.clone()])
                .zip(rows)
            {
                let row = row.as_slice_mut().expect("rows of a standard-layout block");
                row.iter_mut().zip(&b32).for_each(|(v, &bc)| *v += bc);
                // One f32 exp per class (vectorised): pᵢ = eᵢ / Σe with eᵢ = exp(zᵢ − max),
                // and ℓ = ln Σe − Σₖ tₖ (zₖ − max), summed in f64. The target t is one-hot
                // on yᵢ, or for a soft row split between yᵢ and its partner.
                let max = row.iter().fold(f32::NEG_INFINITY, |m, &v| m.max(v));
                let sum = exp_shifted(row, max, &mut e);
                let yi = yi as usize;
                let shifted = |k: usize| f64::from(row[k] - max);
                let soft = self.soft_of(i);
                out.data_loss += ci
                    * match soft {
                        Some((p, wy, wp)) => sum.ln() - wy * shifted(yi) - wp * shifted(p),
                        None => sum.ln() - shifted(yi),
                    };
                // The row becomes cᵢ (pᵢ − tᵢ), the gradient with respect to zᵢ.
                let to_grad = (ci / sum) as f32;
                row.iter_mut()
                    .zip(&e)
                    .for_each(|(r, &ek)| *r = to_grad * ek);
                match soft {
                    Some((p, wy, wp)) => {
                        row[yi] -= (ci * wy) as f32;
                        row[p] -= (ci * wp) as f32;
                    }
                    None => row[yi] -= ci as f32,
                }
                out.g_b
                    .iter_mut()
                    .zip(row.iter())
                    .for_each(|(g, &r)| *g += f64::from(r));
            }
            linalg::sgemm(z.t(), xc.view(), &mut g_blk, false);
            out.g_w.zip_mut_with(&g_blk, |acc, &v| *acc += f64::from(v));
        }
    }
}

/// Replaces `z` by `log softmax(z)` (shifted by the maximum, so exp never overflows) and
/// returns `logsumexp(z)`.
pub(crate) fn log_softmax_in_place(mut z: ArrayViewMut1<f64>) -> f64 {
    let max = z.fold(f64::NEG_INFINITY, |m, &v| m.max(v));
    let sum: f64 = z.iter().map(|v| (v - max).exp()).sum();
    let lse = max + sum.ln();
    z.mapv_inplace(|v| v - lse);
    lse
}

/// Index of the largest entry, lowest index among exact ties.
pub(crate) fn lowest_argmax(z: ArrayView1<f64>) -> u32 {
    let mut best = 0usize;
    for (c, &v) in z.iter().enumerate().skip(1) {
        if v > z[best] {
            best = c;
        }
    }
    best as u32
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    fn problem() -> (Array2<f32>, Vec<u32>) {
        let x = array![
            [0.5f32, -1.0, 2.0],
            [1.5, 0.3, -0.7],
            [-0.2, 0.8, 0.1],
            [0.9, -0.4, -1.1],
            [-1.3, 0.2, 0.6]
        ];
        (x, vec![0, 2, 1, 2, 0])
    }

    /// Central differences (h = 1e-6) of the f64 objective against `grad`, entry by entry.
    fn assert_matches_finite_differences(loss: &SoftmaxLoss<'_>, theta: &[f64], grad: &[f64]) {
        let mut scratch = vec![0.0; theta.len()];
        for i in 0..theta.len() {
            let h = 1e-6;
            let mut tp = theta.to_vec();
            tp[i] += h;
            let mut tm = theta.to_vec();
            tm[i] -= h;
            let fd = (loss.value_and_gradient(&tp, &mut scratch)
                - loss.value_and_gradient(&tm, &mut scratch))
                / (2.0 * h);
            assert!(
                (fd - grad[i]).abs() < 1e-7,
                "param {i}: fd {fd} vs {}",
                grad[i]
            );
        }
    }

    #[test]
    fn gradient_matches_finite_differences() {
        // Common practice, no source: central differences, step 1e-6, on unequal class
        // weights, a non-zero L2 penalty, a non-trivial column transform and rows split over
        // two parts.
        let (x, y) = problem();
        let mean = array![0.1, -0.2, 0.3];
        let scale = array![1.5, 0.7, 2.0];
        let parts = [x.slice(s![..2, ..]), x.slice(s![2.., ..])];
        let loss = SoftmaxLoss::new(
            &parts,
            mean.view(),
            scale.view(),
            &y,
            &[0.7, 1.9, 1.1],
            3,
            0.3,
        );
        let theta: Vec<f64> = (0..loss.n_params())
            .map(|i| ((i * 7 % 11) as f64 - 5.0) / 7.0)
            .collect();
        let mut grad = vec![0.0; theta.len()];
        loss.value_and_gradient(&theta, &mut grad);
        assert_matches_finite_differences(&loss, &theta, &grad);
    }

    #[test]
    fn soft_target_gradient_matches_finite_differences() {
        // Common practice, no source: central differences, step 1e-6, as above, with soft
        // targets (mixup's λ·e(y) + (1 − λ)·e(partner), Zhang et al. 2018) on rows of both
        // parts, one of them mixing towards a class with no hard row of its own weight.
        let (x, y) = problem();
        let mean = array![0.1, -0.2, 0.3];
        let scale = array![1.5, 0.7, 2.0];
        let parts = [x.slice(s![..2, ..]), x.slice(s![2.., ..])];
        let soft = [
            None,
            Some(SoftLabel {
                partner: 0,
                weight: 0.7,
            }),
            None,
            Some(SoftLabel {
                partner: 1,
                weight: 0.55,
            }),
            Some(SoftLabel {
                partner: 2,
                weight: 0.9,
            }),
        ];
        let loss = SoftmaxLoss::new(
            &parts,
            mean.view(),
            scale.view(),
            &y,
            &[0.7, 1.9, 1.1],
            3,
            0.3,
        )
        .with_soft(&soft);
        let theta: Vec<f64> = (0..loss.n_params())
            .map(|i| ((i * 5 % 13) as f64 - 6.0) / 9.0)
            .collect();
        let mut grad = vec![0.0; theta.len()];
        let f = loss.value_and_gradient(&theta, &mut grad);
        assert_matches_finite_differences(&loss, &theta, &grad);
        // The f32 evaluation computes the same soft objective, to f32 rounding.
        let mut g_fast = vec![0.0; theta.len()];
        let f_fast = loss.evaluate(&theta, &mut g_fast, Precision::Fast);
        assert!((f - f_fast).abs() < 1e-5, "{f} vs {f_fast}");
        for (a, b) in grad.iter().zip(&g_fast) {
            assert!((a - b).abs() < 1e-5, "{a} vs {b}");
        }
        // A soft part with all the weight on the row's own label is the hard row, bit for bit.
        let whole: Vec<Option<SoftLabel>> = (0..5)
            .map(|_| {
                Some(SoftLabel {
                    partner: 1,
                    weight: 1.0,
                })
            })
            .collect();
        let hard = SoftmaxLoss::new(
            &parts,
            mean.view(),
            scale.view(),
            &y,
            &[0.7, 1.9, 1.1],
            3,
            0.3,
        );
        let as_soft = SoftmaxLoss::new(
            &parts,
            mean.view(),
            scale.view(),
            &y,
            &[0.7, 1.9, 1.1],
            3,
            0.3,
        )
        .with_soft(&whole);
        for precision in [Precision::Exact, Precision::Fast] {
            let (mut g1, mut g2) = (vec![0.0; theta.len()], vec![0.0; theta.len()]);
            let f1 = hard.evaluate(&theta, &mut g1, precision);
            let f2 = as_soft.evaluate(&theta, &mut g2, precision);
            assert_eq!(f1.to_bits(), f2.to_bits());
            assert_eq!(g1, g2);
        }
    }

    #[test]
    fn zero_parameters_give_log_c() {
        // Common practice, no source: with W = 0, b = 0 every class has probability 1/C, so the
        // unweighted mean cross-entropy is ln C.
        let (x, y) = problem();
        let (mean, scale) = (Array1::zeros(3), Array1::ones(3));
        let parts = [x.view()];
        let loss = SoftmaxLoss::new(&parts, mean.view(), scale.view(), &y, &[1.0; 3], 3, 0.5);
        let mut g = vec![0.0; loss.n_params()];
        let f = loss.value_and_gradient(&vec![0.0; loss.n_params()], &mut g);
        assert!((f - 3f64.ln()).abs() < 1e-12);
    }

    #[test]
    fn many_blocks_equal_one_pass_and_any_thread_count() {
        // Common practice, no source: the blocked, grouped sums equal a direct f64 evaluation
        // up to rounding, and are bit-identical on 1 and 3 threads.
        let (n, d, c) = (1500, 7, 4);
        let x = Array2::from_shape_fn((n, d), |(i, j)| {
            ((i * 31 + j * 17) % 23) as f32 / 11.0 - 1.0
        });
        let y: Vec<u32> = (0..n).map(|i| (i % c) as u32).collect();
        let (mean, scale) = (Array1::from_elem(d, 0.2), Array1::from_elem(d, 0.9));
        let parts = [x.slice(s![..700, ..]), x.slice(s![700.., ..])];
        let loss = SoftmaxLoss::new(&parts, mean.view(), scale.view(), &y, &[1.0; 4], c, 0.1);
        assert!(loss.groups.len() > 1);
        let theta: Vec<f64> = (0..loss.n_params())
            .map(|i| (i % 5) as f64 / 10.0 - 0.2)
            .collect();
        let run = |threads: usize| {
            let pool = rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .unwrap();
            let mut g = vec![0.0; theta.len()];
            let f = pool.install(|| loss.value_and_gradient(&theta, &mut g));
            (f, g)
        };
        let (f1, g1) = run(1);
        let (f3, g3) = run(3);
        assert_eq!(f1.to_bits(), f3.to_bits());
        assert_eq!(g1, g3);
        // Direct evaluation.
        let w = ArrayView2::from_shape((c, d), &theta[..c * d]).unwrap();
        let mut direct = 0.0;
        for i in 0..n {
            let xs: Vec<f64> = (0..d).map(|j| (f64::from(x[[i, j]]) - 0.2) / 0.9).collect();
            let mut z: Array1<f64> = (0..c)
                .map(|k| theta[c * d + k] + (0..d).map(|j| w[[k, j]] * xs[j]).sum::<f64>())
                .collect();
            log_softmax_in_place(z.view_mut());
            direct -= z[y[i] as usize] / n as f64;
        }
        direct += 0.05 * w.iter().map(|v| v * v).sum::<f64>();
        assert!((f1 - direct).abs() < 1e-12, "{f1} vs {direct}");
    }

    #[test]
    fn stepped_evaluations_track_the_exact_objective() {
        // Common practice, no source: logits kept in f64 and moved by f32 products of the
        // change give, along a path of short steps, the f64 value to far better than one f32
        // rounding of the whole logits (about 1e-7 of a value near 3 here), and the f64
        // gradient to the rounding of the f32 gradient products; bit-identical on 1 and 3
        // threads.
        let (n, d, c) = (1500, 9, 5);
        let x = Array2::from_shape_fn((n, d), |(i, j)| {
            ((i * 37 + j * 11) % 29) as f32 / 7.0 + 40.0 * j as f32
        });
        let y: Vec<u32> = (0..n).map(|i| ((i * 7) % c) as u32).collect();
        let mean = Array1::from_shape_fn(d, |j| 2.0 + 40.0 * j as f64);
        let scale = Array1::from_elem(d, 1.2);
        let parts = [x.slice(s![..900, ..]), x.slice(s![900.., ..])];
        let weights = [0.7, 1.9, 1.1, 1.0, 0.4];
        let start: Vec<f64> = (0..c * d + c)
            .map(|i| ((i * 7 % 11) as f64 - 5.0) / 7.0)
            .collect();
        // Steps like the last ones of a fit: each moves every parameter by up to 1e-3,
        // shrinking, in varying directions.
        let path = |k: usize| -> Vec<f64> {
            let t = 1e-3 * 0.8f64.powi(k as i32);
            start
                .iter()
                .enumerate()
                .map(|(i, v)| v + t * (((i + k) % 3) as f64 - 1.0))
                .collect()
        };
        let run = |threads: usize| {
            let pool = rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .unwrap();
            pool.install(|| {
                let loss =
                    SoftmaxLoss::new(&parts, mean.view(), scale.view(), &y, &weights, c, 0.1);
                (0..30)
                    .map(|k| {
                        let theta = path(k);
                        let mut g = vec![0.0; theta.len()];
                        let f = loss.evaluate(&theta, &mut g, Precision::Stepped);
                        let mut g_exact = vec![0.0; theta.len()];
                        let f_exact = loss.evaluate(&theta, &mut g_exact, Precision::Exact);
                        (f, g, f_exact, g_exact)
                    })
                    .collect::<Vec<_>>()
            })
        };
        let one = run(1);
        for (k, (f, g, f_exact, g_exact)) in one.iter().enumerate() {
            assert!((f - f_exact).abs() <= 1e-12, "step {k}: {f} vs {f_exact}");
            for (a, b) in g.iter().zip(g_exact) {
                assert!((a - b).abs() < 1e-7, "step {k}: {a} vs {b}");
            }
        }
        for (a, b) in one.iter().zip(run(3)) {
            assert_eq!(a.0.to_bits(), b.0.to_bits());
            assert_eq!(a.1, b.1);
        }
    }

    #[test]
    fn log_softmax_is_stable_for_huge_logits() {
        // Common practice, no source: shifting by the max avoids exp overflow.
        let mut z = array![1000.0, 1000.0, -1000.0];
        let lse = log_softmax_in_place(z.view_mut());
        assert!((lse - (1000.0 + 2f64.ln())).abs() < 1e-9);
        assert!((z[0] - (-(2f64.ln()))).abs() < 1e-12);
        assert!(z.iter().all(|v| v.is_finite()));
    }
}
