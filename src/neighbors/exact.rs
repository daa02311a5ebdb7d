//! The exact k-NN kernel: a blocked f32 matrix product nominates candidates, an f64 re-score
//! ranks them, and a rounding-error bound proves that nothing outside the candidates could
//! belong to the top k (a query whose proof fails is rescanned, so the result always equals
//! an f64 brute force).
//!
//! Fast score of base row b for query a (lower is nearer; terms constant per query dropped):
//! euclidean ‖b‖² − 2 a·b, cosine −â·b̂ on rows normalised to unit length.
//!
//! Work is split into fixed blocks of query rows processed in parallel with rayon; every
//! query's result depends only on its own row, so output does not depend on the thread count.
//!
//! Memory: the rows the matrix product sees (centred for euclidean, unit length for cosine)
//! are made a block at a time into per-thread buffers, never as a full copy of the base; the
//! extra work is one pass over the base rows per block of queries, about 1/(2·512) of the
//! product's.

use ndarray::{ArrayView2, ArrayViewMut2, CowArray, Ix2};
use rayon::prelude::*;

use super::topk::TopK;
use super::{Knn, Metric, distance};
use crate::data::Rows;
use crate::linalg;

/// Query rows per parallel work item (and per matrix product). Each block of queries
/// rebuilds and packs every base row once, so a taller block spends less on that per product.
const QUERY_BLOCK: usize = 512;
/// Base rows per matrix product; the 512 × 1024 f32 score block is 2 MiB.
const BASE_BLOCK: usize = 1024;
/// Unit roundoff of f32.
const U32: f64 = f32::EPSILON as f64 / 2.0;

/// Extra fast-pass candidates kept beyond k, so that f32 rounding rarely pushes a true
/// neighbour out of the candidate set (when it might have, the proof below catches it).
fn margin(k: usize) -> usize {
    8 + k / 4
}

/// Rows made ready for the kernel: standard layout originals (for the exact re-score), the
/// rows the matrix product uses, and their norms.
pub(crate) struct Prepared<'a> {
    metric: Metric,
    /// The matrix the rows come from, in standard (row-major contiguous) layout.
    orig: CowArray<'a, f32, Ix2>,
    /// Which rows of `orig` are the rows searched, in order (`None`: all of them), so a
    /// fold's rows are searched in place in the input matrix.
    pick: Option<&'a [usize]>,
    /// How the matrix product sees a row. Euclidean: shifted by a common centre (distances
    /// are translation invariant, and centring shrinks the norms whose cancellation costs
    /// f32 accuracy). Cosine: scaled to unit length (zero rows stay zero).
    shift: Vec<f64>,
    /// Cosine: 1 / ‖original row‖ (0 for a zero row). Euclidean: empty.
    inv_norms: Vec<f64>,
    /// ‖original row‖ in f64 (cosine re-score).
    norms: Vec<f64>,
    /// ‖product row‖ in f64 (error bound, score conversion).
    product_norms: Vec<f64>,
    /// Euclidean: ‖product row‖² rounded to f32, the fast-score offset. Cosine: empty.
    sq_norms_f32: Vec<f32>,
    /// Largest finite ‖product row‖, for the rounding-error bound.
    max_norm: f64,
}

/// Column means of `x` in f64: the common shift for a euclidean search over `x`.
pub(crate) fn centre(x: Rows<'_>) -> Vec<f64> {
    let mut acc = vec![0f64; x.ncols()];
    for r in x.iter() {
        for (a, &v) in acc.iter_mut().zip(r.iter()) {
            *a += f64::from(v);
        }
    }
    let n = x.nrows().max(1) as f64;
    acc.iter_mut().for_each(|a| *a /= n);
    acc
}

impl<'a> Prepared<'a> {
    /// `shift` (euclidean only, ignored for cosine) must be the same for the queries and the
    /// base of one search.
    pub(crate) fn new(x: Rows<'a>, metric: Metric, shift: &[f64]) -> Prepared<'a> {
        let (orig, pick) = match x.source() {
            (m, pick) if m.is_standard_layout() => (CowArray::from(m), pick),
            _ => (CowArray::from(x.to_owned()), None),
        };
        let n = pick.map_or(orig.nrows(), <[usize]>::len);
        let d = orig.ncols();
        let norms: Vec<f64> = (0..n)
            .map(|i| {
                let r = pick.map_or(i, |p| p[i]);
                distance::norm(orig.as_slice().map_or(&[][..], |s| &s[r * d..(r + 1) * d]))
            })
            .collect();
        let inv_norms: Vec<f64> = match metric {
            Metric::Euclidean => Vec::new(),
            Metric::Cosine => norms
                .iter()
                .map(|&n| if n > 0.0 { 1.0 / n } else { 0.0 })
                .collect(),
        };
        let mut p = Prepared {
            metric,
            orig,
            pick,
            shift: match metric {
                Metric::Euclidean => shift.to_vec(),
                Metric::Cosine => Vec::new(),
            },
            inv_norms,
            norms,
            product_norms: Vec::new(),
            sq_norms_f32: Vec::new(),
            max_norm: 0.0,
        };
        let product_norms: Vec<f64> = match metric {
            Metric::Euclidean => {
                let mut tmp = vec![0f32; p.ncols()];
                (0..p.nrows())
                    .map(|i| {
                        p.product_row(i, &mut tmp);
                        distance::norm(&tmp)
                    })
                    .collect()
            }
            Metric::Cosine => p
                .norms
                .iter()
                .map(|&n| if n > 0.0 { 1.0 } else { 0.0 })
                .collect(),
        };
        let max_norm = product_norms
            .iter()
            .copied()
            .filter(|v| v.is_finite())
            .fold(0.0f64, f64::max);
        let sq_norms_f32 = match metric {
            Metric::Euclidean => product_norms.iter().map(|&n| (n * n) as f32).collect(),
            Metric::Cosine => Vec::new(),
        };
        p.product_norms = product_norms;
        p.max_norm = max_norm;
        p.sq_norms_f32 = sq_norms_f32;
        p
    }

    pub(crate) fn nrows(&self) -> usize {
        self.pick.map_or(self.orig.nrows(), <[usize]>::len)
    }

    pub(crate) fn ncols(&self) -> usize {
        self.orig.ncols()
    }

    pub(crate) fn metric(&self) -> Metric {
        self.metric
    }

    /// Writes product row `i` (centred or unit length, rounded to f32) into `out`.
    #[inline(always)]
    fn product_row(&self, i: usize, out: &mut [f32]) {
        let src = self.row(i);
        match self.metric {
            Metric::Euclidean => {
                for ((o, &v), &c) in out.iter_mut().zip(src).zip(&self.shift) {
                    *o = (f64::from(v) - c) as f32;
                }
            }
            Metric::Cosine => {
                let inv = self.inv_norms[i];
                for (o, &v) in out.iter_mut().zip(src) {
                    *o = (f64::from(v) * inv) as f32;
                }
            }
        }
    }

    /// Product rows `r0..r1`, row-major, into `out` (resized to fit).
    #[inline(always)]
    fn product_rows(&self, r0: usize, r1: usize, out: &mut Vec<f32>) {
        let d = self.ncols();
        out.resize((r1 - r0) * d, 0.0);
        for (i, chunk) in (r0..r1).zip(out.chunks_exact_mut(d.max(1))) {
            self.product_row(i, chunk);
        }
    }

    /// Original row `i` as a slice.
    pub(crate) fn row(&self, i: usize) -> &[f32] {
        let d = self.ncols();
        let i = self.pick.map_or(i, |p| p[i]);
        // Standard layout: row i occupies [i·d, (i+1)·d) of the contiguous buffer.
        self.orig
            .as_slice()
            .map(|s| &s[i * d..(i + 1) * d])
            .unwrap_or(&[])
    }

    /// Exact ranking key between query row `qi` of `self` and base row `bi` of `base`.
    pub(crate) fn key(&self, qi: usize, base: &Prepared<'_>, bi: usize) -> f64 {
        distance::rank_key(
            self.metric,
            self.row(qi),
            base.row(bi),
            self.norms[qi],
            base.norms[bi],
        )
    }

    /// Bound on |fast score − exact score| for query row `qi` against any row of `base`,
    /// with a factor-2 safety margin. Fast scores are f32 dot products (error ≤ γ_d Σ|aᵢbᵢ|,
    /// Higham's bound) plus f32 roundings of the norms; the exact keys carry f64 summation
    /// error, also covered.
    fn error_bound(&self, qi: usize, base: &Prepared<'_>) -> f64 {
        let d = self.ncols() as f64;
        let gamma = (d * U32 / (1.0 - d * U32).max(0.5)).min(1.0);
        let eps64 = d * f64::EPSILON;
        match self.metric {
            Metric::Euclidean => {
                // The last term covers rounding the shifted rows to f32.
                let na = self.product_norms[qi];
                let m = base.max_norm;
                2.0 * ((2.0 * gamma + 2.0 * U32) * na * m + 2.0 * U32 * m * m)
                    + (4.0 * eps64 + 4.0 * U32) * (na + m) * (na + m)
            }
            Metric::Cosine => 4.0 * (gamma + 3.0 * U32) + 8.0 * eps64,
        }
    }

    /// Converts an exact ranking key for query `qi` to the fast-score scale.
    fn key_to_score(&self, qi: usize, key: f64) -> f64 {
        match self.metric {
            Metric::Euclidean => key - self.product_norms[qi] * self.product_norms[qi],
            Metric::Cosine => key - 1.0,
        }
    }
}

/// Peak bytes of one search of `nq` query rows against `nb` base rows of `d` dims on
/// `threads` workers, for the memory estimate checked before any work: the k results, the
/// norms each prepared row keeps, and per busy worker one query block's and one base block's
/// product rows, its score block, its candidate lists and the matrix product's packing
/// buffers.
pub fn search_peak_bytes(nq: usize, nb: usize, d: usize, k: usize, threads: usize) -> u64 {
    let (nq, nb, d, k) = (nq as u64, nb as u64, d as u64, k as u64);
    let results = nq * k * 8;
    let norms = (nq + nb) * (3 * 8 + 4);
    let qb = (QUERY_BLOCK as u64).min(nq);
    let bb = (BASE_BLOCK as u64).min(nb);
    let cap = k + margin(k as usize) as u64;
    let per_worker = (qb * d + bb * d + qb * bb) * 4
        + qb * cap * 16
        + linalg::scratch_bytes(qb as usize, bb as usize, d as usize);
    let workers = (threads as u64).min(nq.div_ceil(QUERY_BLOCK as u64)).max(1);
    results + norms + workers * per_worker
}

/// k nearest rows of `base` for each row of `queries` (both prepared with the same metric).
/// With `exclude_self`, `queries` and `base` are the same rows and query i never returns
/// base row i. `k` must already be clamped to the available rows and be ≥ 1.
pub(crate) fn search(
    queries: &Prepared<'_>,
    base: &Prepared<'_>,
    k: usize,
    exclude_self: bool,
) -> Knn {
    let nq = queries.nrows();
    let nb = base.nrows();
    let available = if exclude_self {
        nb.saturating_sub(1)
    } else {
        nb
    };
    debug_assert!(k >= 1 && k <= available);
    let cap = (k + margin(k)).min(available);
    let mut indices = vec![0u32; nq * k];
    let mut distances = vec![0f32; nq * k];
    indices
        .par_chunks_mut(QUERY_BLOCK * k)
        .zip(distances.par_chunks_mut(QUERY_BLOCK * k))
        .enumerate()
        .for_each(|(block, (idx_out, dist_out))| {
            let q0 = block * QUERY_BLOCK;
            let q1 = (q0 + QUERY_BLOCK).min(nq);
            let mut tops = fast_pass(queries, base, q0, q1, cap, exclude_self);
            let mut scratch = Vec::with_capacity(cap);
            for (i, top) in tops.iter_mut().enumerate() {
                let qi = q0 + i;
                finish_query(
                    queries,
                    base,
                    qi,
                    top,
                    k,
                    cap == available,
                    exclude_self,
                    &mut scratch,
                );
                for (j, &(key, bi)) in scratch.iter().take(k).enumerate() {
                    idx_out[i * k + j] = bi;
                    dist_out[i * k + j] = distance::reported(queries.metric, key);
                }
            }
        });
    Knn {
        k,
        indices,
        distances,
    }
}

/// The blocked f32 pass for query rows `q0..q1`: one bounded candidate list per query.
///
/// Besides the product, each block of queries rebuilds the base's product rows (the price of
/// not copying the base) and scans every score; on a CPU with AVX-512 both are compiled
/// sixteen lanes wide (`fast_pass_avx512`), where the baseline build vectorises them only
/// four wide and they took half as long as the products. The arithmetic is the same.
fn fast_pass(
    queries: &Prepared<'_>,
    base: &Prepared<'_>,
    q0: usize,
    q1: usize,
    cap: usize,
    exclude_self: bool,
) -> Vec<TopK> {
    #[cfg(target_arch = "x86_64")]
    {
        if std::arch::is_x86_feature_detected!("avx512f") {
            // SAFETY: the CPU has AVX-512F, the only requirement of `fast_pass_avx512`.
            return unsafe { fast_pass_avx512(queries, base, q0, q1, cap, exclude_self) };
        }
    }
    fast_pass_body(queries, base, q0, q1, cap, exclude_self)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f")]
fn fast_pass_avx512(
    queries: &Prepared<'_>,
    base: &Prepared<'_>,
    q0: usize,
    q1: usize,
    cap: usize,
    exclude_self: bool,
) -> Vec<TopK> {
    fast_pass_body(queries, base, q0, q1, cap, exclude_self)
}

#[inline(always)]
fn fast_pass_body(
    queries: &Prepared<'_>,
    base: &Prepared<'_>,
    q0: usize,
    q1: usize,
    cap: usize,
    exclude_self: bool,
) -> Vec<TopK> {
    let qn = q1 - q0;
    let nb = base.nrows();
    let d = queries.ncols();
    let mut qbuf = Vec::new();
    queries.product_rows(q0, q1, &mut qbuf);
    let qrows = ArrayView2::from_shape((qn, d), &qbuf[..]).expect("sized for the query block");
    let mut bbuf = Vec::new();
    let mut tops: Vec<TopK> = (0..qn).map(|_| TopK::new(cap)).collect();
    let mut buf = vec![0f32; qn * BASE_BLOCK.min(nb)];
    let mut b0 = 0;
    while b0 < nb {
        let b1 = (b0 + BASE_BLOCK).min(nb);
        let bn = b1 - b0;
        base.product_rows(b0, b1, &mut bbuf);
        let brows = ArrayView2::from_shape((bn, d), &bbuf[..]).expect("sized for the base block");
        let mut g = ArrayViewMut2::from_shape((qn, bn), &mut buf[..qn * bn])
            .expect("buffer is sized for the largest block");
        linalg::sgemm(qrows, brows.t(), &mut g, false);
        for (i, top) in tops.iter_mut().enumerate() {
            let row = &mut buf[i * bn..(i + 1) * bn];
            let qi = q0 + i;
            if exclude_self && (b0..b1).contains(&qi) {
                // −∞ similarity turns into a +∞ score, which never enters the list.
                row[qi - b0] = f32::NEG_INFINITY;
            }
            scan_row(top, row, b0, base, queries.metric);
        }
        b0 = b1;
    }
    tops
}

/// Scores tested together before any is offered one by one (see [`scan_row`]).
const SCAN_CHUNK: usize = 16;

/// Offers one row of the product block to a query's candidate list.
///
/// Once the list is full almost no score beats its threshold, so each chunk of
/// [`SCAN_CHUNK`] scores is first tested as a whole with a branch-free test the compiler can
/// vectorise, and only a chunk holding a candidate is walked one score at a time. The
/// threshold only falls during a walk, so a score the per-score test would admit always
/// makes its chunk's test true: the candidates offered, and their order, are unchanged.
#[inline(always)]
fn scan_row(top: &mut TopK, products: &[f32], b0: usize, base: &Prepared<'_>, metric: Metric) {
    let mut thr = top.threshold();
    match metric {
        Metric::Euclidean => {
            let sq = &base.sq_norms_f32[b0..b0 + products.len()];
            let mut j0 = b0;
            for (pc, sc) in products.chunks(SCAN_CHUNK).zip(sq.chunks(SCAN_CHUNK)) {
                // Below the threshold, or NaN (TopK ranks NaN last, and admits it so the
                // list always fills); `|` rather than `||` keeps the test branch-free.
                let any = pc.iter().zip(sc).fold(false, |acc, (&g, &n2)| {
                    let s = n2 - 2.0 * g;
                    acc | (s < thr) | s.is_nan()
                });
                if any {
                    for (j, (&g, &n2)) in pc.iter().zip(sc).enumerate() {
                        let s = n2 - 2.0 * g;
                        if s < thr || s.is_nan() {
                            top.push(s, (j0 + j) as u32);
                            thr = top.threshold();
                        }
                    }
                }
                j0 += pc.len();
            }
        }
        Metric::Cosine => {
            let mut j0 = b0;
            for pc in products.chunks(SCAN_CHUNK) {
                let any = pc
                    .iter()
                    .fold(false, |acc, &g| acc | (-g < thr) | g.is_nan());
                if any {
                    for (j, &g) in pc.iter().enumerate() {
                        let s = -g;
                        if s < thr || s.is_nan() {
                            top.push(s, (j0 + j) as u32);
                            thr = top.threshold();
                        }
                    }
                }
                j0 += pc.len();
            }
        }
    }
}

/// Re-scores one query's candidates exactly and, unless the error bound proves them
/// complete, rescans the base for every row that could still rank in the top k. Leaves the
/// ordered (key, index) list in `scratch`.
#[allow(clippy::too_many_arguments)]
fn finish_query(
    queries: &Prepared<'_>,
    base: &Prepared<'_>,
    qi: usize,
    top: &TopK,
    k: usize,
    all_rows_are_candidates: bool,
    exclude_self: bool,
    scratch: &mut Vec<(f64, u32)>,
) {
    scratch.clear();
    scratch.extend(
        top.as_slice()
            .iter()
            .map(|&(_, bi)| (queries.key(qi, base, bi as usize), bi)),
    );
    sort_pairs(scratch);
    if all_rows_are_candidates {
        return;
    }
    let limit = if top.is_full() && scratch.len() >= k {
        let worst_fast = f64::from(top.threshold());
        let kth = queries.key_to_score(qi, scratch[k - 1].0);
        let bound = queries.error_bound(qi, base);
        if worst_fast - bound > kth {
            return;
        }
        // Any row with exact score ≤ kth has fast score ≤ kth + bound: collect them all.
        kth + bound
    } else {
        // Only rows whose fast score overflowed were left out; take every row.
        f64::INFINITY
    };
    scratch.clear();
    let d = queries.ncols();
    let mut q = vec![0f32; d];
    queries.product_row(qi, &mut q);
    let q = ndarray::ArrayView1::from(&q[..]);
    let mut brow = vec![0f32; d];
    for bi in 0..base.nrows() {
        if exclude_self && bi == qi {
            continue;
        }
        base.product_row(bi, &mut brow);
        let g = f64::from(ndarray::ArrayView1::from(&brow[..]).dot(&q));
        let s = match queries.metric {
            Metric::Euclidean => f64::from(base.sq_norms_f32[bi]) - 2.0 * g,
            Metric::Cosine => -g,
        };
        if s <= limit || s.is_nan() || limit.is_nan() {
            scratch.push((queries.key(qi, base, bi), bi as u32));
        }
    }
    sort_pairs(scratch);
}

/// Orders (key, index) pairs by key, then index. Keys are never NaN (see `rank_key`).
pub(crate) fn sort_pairs(v: &mut [(f64, u32)]) {
    v.sort_unstable_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
}
