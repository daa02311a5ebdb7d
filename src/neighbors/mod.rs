//! Exact k-nearest neighbours (blocked matrix products, multi-threaded) and an approximate
//! k-d tree mode. Used by the neighbour augmenters, the k-NN probe and the diagnostics.

use ndarray::ArrayView2;
use serde::{Deserialize, Serialize};

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
    pub k: usize,
    pub indices: Vec<u32>,
    pub distances: Vec<f32>,
}

impl Knn {
    pub fn n_queries(&self) -> usize {
        self.indices.len().checked_div(self.k).unwrap_or(0)
    }

    /// Neighbours of query `i` (indices, distances).
    pub fn row(&self, i: usize) -> (&[u32], &[f32]) {
        let r = i * self.k..(i + 1) * self.k;
        (&self.indices[r.clone()], &self.distances[r])
    }
}

/// k nearest rows of `base` for every row of `queries`; `k` is clamped to `base.nrows()`.
pub fn knn(queries: ArrayView2<f32>, base: ArrayView2<f32>, k: usize, metric: Metric) -> Knn {
    let _ = (queries, base, k, metric);
    todo!("neighbors helper")
}

/// k nearest *other* rows of `x` for every row of `x` (a row is never its own neighbour);
/// `k` is clamped to `x.nrows() - 1`.
pub fn knn_within(x: ArrayView2<f32>, k: usize, metric: Metric) -> Knn {
    let _ = (x, k, metric);
    todo!("neighbors helper")
}
