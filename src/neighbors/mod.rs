//! Exact k-nearest neighbours (blocked matrix products, multi-threaded) and an approximate
//! k-d tree mode. Used by the neighbour augmenters, the k-NN probe and the diagnostics.
//!
//! The exact search ([`knn`], [`knn_within`]) returns what an f64 brute force returns —
//! same neighbours, same order, ties broken by lower base index — at the speed of an f32
//! matrix product: see `exact.rs` for how the f32 pass is made safe. The k-d tree mode
//! ([`IndexKind::KdTree`]) is approximate; [`recall_at_k`] measures how close it comes.

mod distance;
mod exact;
mod kdtree;
pub mod magnitude;
mod recall;
mod topk;

use ndarray::{ArrayView2, CowArray, Ix2};

use crate::data::Rows;
use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};

pub use exact::search_peak_bytes;
pub use recall::recall_at_k;

/// Distance used for neighbour search.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Metric {
    /// 1 − cos(a, b).
    Cosine,
    /// ‖a − b‖₂ (not squared).
    Euclidean,
}

/// k nearest base rows for each query row, row-major `n_queries × k`, nearest first, ties
/// broken by lower base index.
#[derive(Debug, Clone, PartialEq)]
pub struct Knn {
    /// Neighbours per query row.
    pub k: usize,
    /// Base-row index of each neighbour, `n_queries × k`.
    pub indices: Vec<u32>,
    /// Distance of each neighbour, in the metric the search used.
    pub distances: Vec<f32>,
}

impl Knn {
    /// Number of query rows (0 when `k` is 0).
    pub fn n_queries(&self) -> usize {
        self.indices.len().checked_div(self.k).unwrap_or(0)
    }

    /// Neighbours of query `i` (indices, distances).
    pub fn row(&self, i: usize) -> (&[u32], &[f32]) {
        let r = i * self.k..(i + 1) * self.k;
        (&self.indices[r.clone()], &self.distances[r])
    }

    /// The result with no neighbours (k = 0, nothing stored).
    pub fn empty() -> Knn {
        Knn {
            k: 0,
            indices: Vec::new(),
            distances: Vec::new(),
        }
    }
}

/// How neighbours are found.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum IndexKind {
    /// Blocked brute force; equals an f64 brute force exactly.
    Exact,
    /// A k-d tree over the leading principal components, candidates re-ranked by the exact
    /// distance in the full space. **Approximate**: a true neighbour that is far in the
    /// projection can be missed. Worth it only for large bases of low intrinsic dimension.
    KdTree,
}

/// k nearest rows of `base` for every row of `queries`; `k` is clamped to `base.nrows()`.
/// Either side is a matrix view or [`Rows`] of one (a fold's rows, searched in place).
///
/// Distances: cosine 1 − cos (a zero row has similarity 0 with everything), euclidean
/// ‖a − b‖. Rows with non-finite values rank last. `k = 0` or an empty base gives
/// [`Knn::empty`].
///
/// # Panics
/// If `queries` and `base` have different column counts (a caller bug: both come from one
/// dataset). Use [`try_knn`] where the widths are not already known to agree.
pub fn knn<'q, 'b>(
    queries: impl Into<Rows<'q>>,
    base: impl Into<Rows<'b>>,
    k: usize,
    metric: Metric,
) -> Knn {
    knn_with(IndexKind::Exact, queries, base, k, metric)
}

/// [`knn`], with a column-count mismatch reported as an error instead of a panic.
pub fn try_knn(
    queries: ArrayView2<f32>,
    base: ArrayView2<f32>,
    k: usize,
    metric: Metric,
) -> Result<Knn> {
    check_widths(queries.into(), base.into())?;
    Ok(knn(queries, base, k, metric))
}

/// k nearest *other* rows of `x` for every row of `x` (a row is never its own neighbour);
/// `k` is clamped to `x.nrows() - 1`.
///
/// "Other" is by position: an exact duplicate of a row is a neighbour at distance 0.
pub fn knn_within<'a>(x: impl Into<Rows<'a>>, k: usize, metric: Metric) -> Knn {
    knn_within_with(IndexKind::Exact, x, k, metric)
}

/// [`knn`] by the chosen index.
///
/// # Panics
/// As [`knn`], if the column counts differ.
pub fn knn_with<'q, 'b>(
    kind: IndexKind,
    queries: impl Into<Rows<'q>>,
    base: impl Into<Rows<'b>>,
    k: usize,
    metric: Metric,
) -> Knn {
    let (queries, base) = (queries.into(), base.into());
    if let Err(e) = check_widths(queries, base) {
        panic!("{e}");
    }
    let k = k.min(base.nrows());
    if k == 0 {
        return Knn::empty();
    }
    match kind {
        IndexKind::Exact => {
            let shift = exact::centre(base);
            let q = exact::Prepared::new(queries, metric, &shift);
            let b = exact::Prepared::new(base, metric, &shift);
            exact::search(&q, &b, k, false)
        }
        // The approximate mode projects every row anyway; picked rows are gathered first.
        IndexKind::KdTree => {
            let (q, b) = (contiguous(queries), contiguous(base));
            kdtree::search(q.view(), Some(b.view()), k, metric)
        }
    }
}

/// [`knn_within`] by the chosen index.
pub fn knn_within_with<'a>(
    kind: IndexKind,
    x: impl Into<Rows<'a>>,
    k: usize,
    metric: Metric,
) -> Knn {
    let x = x.into();
    let k = k.min(x.nrows().saturating_sub(1));
    if k == 0 {
        return Knn::empty();
    }
    match kind {
        IndexKind::Exact => {
            let p = exact::Prepared::new(x, metric, &exact::centre(x));
            exact::search(&p, &p, k, true)
        }
        IndexKind::KdTree => kdtree::search(contiguous(x).view(), None, k, metric),
    }
}

/// The rows as one matrix: borrowed when they already are one.
fn contiguous(x: Rows<'_>) -> CowArray<'_, f32, Ix2> {
    match x.as_view() {
        Some(v) => CowArray::from(v),
        None => CowArray::from(x.to_owned()),
    }
}

fn check_widths(queries: Rows<'_>, base: Rows<'_>) -> Result<()> {
    if queries.ncols() == base.ncols() {
        return Ok(());
    }
    Err(Error::param(
        "queries",
        format!(
            "queries have {} columns but the base rows have {}",
            queries.ncols(),
            base.ncols()
        ),
        "search with rows of the same embedding width as the base",
    ))
}
