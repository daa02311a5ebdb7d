//! Approximate k-NN: a kiddo k-d tree over the leading principal components of the base,
//! with each query's tree candidates re-ranked by the exact distance in the full space.
//!
//! Approximate because a true neighbour can be far away in the projection (the discarded
//! components carry its difference) and so never become a candidate. Fetching several
//! times k candidates and re-ranking exactly recovers most of them on data whose variance
//! is concentrated in few directions — typical of class-conditional embedding clusters.
//! For cosine, rows are scaled to unit length first; on the unit sphere euclidean order is
//! cosine order.

use std::num::NonZero;

use kiddo::{ImmutableKdTree, SquaredEuclidean};
use ndarray::{Array2, ArrayView2, Axis};
use rayon::prelude::*;

use super::exact::{self, Prepared, sort_pairs};
use super::{Knn, Metric, distance};
use crate::pca::Pca;

/// Tree dimensions available (k-d trees need the dimension at compile time).
const TREE_DIMS: [usize; 3] = [8, 16, 32];
/// Share of the variance the projection aims to keep when choosing the tree dimension.
const TARGET_VARIANCE: f64 = 0.9;
/// Tree candidates fetched per wanted neighbour.
const CANDIDATES_PER_NEIGHBOUR: usize = 4;
/// The PCA is fitted on at most this many evenly spaced base rows: the leading directions
/// of a large base are stable under subsampling, and the fit then costs O(d²·4096).
const PCA_SAMPLE: usize = 4096;
/// Query rows per parallel work item.
const QUERY_CHUNK: usize = 256;

/// Tree dimension: the smallest of [`TREE_DIMS`] holding the components that keep
/// [`TARGET_VARIANCE`], or the largest.
fn tree_dims(pca: &Pca) -> usize {
    let want = pca.components_for(TARGET_VARIANCE).max(1);
    TREE_DIMS
        .iter()
        .copied()
        .find(|&p| p >= want)
        .unwrap_or(TREE_DIMS[TREE_DIMS.len() - 1])
}

/// k nearest rows of `base` (or, with `base = None`, of `queries` excluding each row
/// itself). `k` is already clamped and ≥ 1. Falls back to the exact search where a tree
/// cannot help or cannot be built (a base no larger than the candidate count, rows PCA
/// rejects).
pub(crate) fn search<'a>(
    queries: ArrayView2<'a, f32>,
    base: Option<ArrayView2<'a, f32>>,
    k: usize,
    metric: Metric,
) -> Knn {
    let within = base.is_none();
    let base_rows = base.unwrap_or(queries);
    let shift = exact::centre(base_rows.into());
    let q = Prepared::new(queries.into(), metric, &shift);
    let b_owned;
    let b = if within {
        &q
    } else {
        b_owned = Prepared::new(base_rows.into(), metric, &shift);
        &b_owned
    };
    let candidates = k * CANDIDATES_PER_NEIGHBOUR + usize::from(within);
    let exact_fallback = || exact::search(&q, b, k, within);
    if candidates >= b.nrows() {
        return exact_fallback();
    }
    let space_b = search_space(base_rows, metric);
    let space_q = if within {
        None
    } else {
        Some(search_space(queries, metric))
    };
    let space_q_view = space_q.as_ref().map_or(space_b.view(), |a| a.view());
    let sample = even_sample(space_b.view(), PCA_SAMPLE);
    let Ok(pca) = Pca::fit(sample.view()) else {
        return exact_fallback();
    };
    let run = match tree_dims(&pca) {
        8 => run::<8>,
        16 => run::<16>,
        _ => run::<32>,
    };
    run(
        &pca,
        space_q_view,
        space_b.view(),
        &q,
        b,
        k,
        candidates,
        within,
    )
    .unwrap_or_else(exact_fallback)
}

/// The rows the tree indexes: as given for euclidean, unit length for cosine (zero rows
/// stay zero).
fn search_space(x: ArrayView2<f32>, metric: Metric) -> Array2<f32> {
    let mut out = x.to_owned();
    if metric == Metric::Cosine {
        for mut row in out.axis_iter_mut(Axis(0)) {
            let n = row
                .iter()
                .map(|&v| f64::from(v) * f64::from(v))
                .sum::<f64>()
                .sqrt();
            if n > 0.0 {
                row.mapv_inplace(|v| (f64::from(v) / n) as f32);
            }
        }
    }
    out
}

/// At most `m` rows at evenly spaced positions (deterministic; all rows if n ≤ m).
fn even_sample(x: ArrayView2<f32>, m: usize) -> Array2<f32> {
    let n = x.nrows();
    if n <= m {
        return x.to_owned();
    }
    let rows: Vec<usize> = (0..m).map(|i| i * n / m).collect();
    x.select(Axis(0), &rows)
}

/// Projects rows onto `P` components, padding with zeros when the PCA kept fewer.
fn points<const P: usize>(pca: &Pca, x: ArrayView2<f32>) -> Vec<[f32; P]> {
    let z = pca.transform(x, P);
    z.outer_iter()
        .map(|r| {
            let mut p = [0f32; P];
            for (dst, &v) in p.iter_mut().zip(r.iter()) {
                *dst = v;
            }
            p
        })
        .collect()
}

#[allow(clippy::too_many_arguments)]
fn run<const P: usize>(
    pca: &Pca,
    space_q: ArrayView2<f32>,
    space_b: ArrayView2<f32>,
    q: &Prepared<'_>,
    b: &Prepared<'_>,
    k: usize,
    candidates: usize,
    within: bool,
) -> Option<Knn> {
    let base_points = points::<P>(pca, space_b);
    let query_points = if within {
        None
    } else {
        Some(points::<P>(pca, space_q))
    };
    let query_points = query_points.as_ref().unwrap_or(&base_points);
    let tree: ImmutableKdTree<f32, P> = ImmutableKdTree::new_from_slice(&base_points).ok()?;
    let n_fetch = NonZero::new(candidates)?;
    let nq = q.nrows();
    let mut indices = vec![0u32; nq * k];
    let mut distances = vec![0f32; nq * k];
    indices
        .par_chunks_mut(QUERY_CHUNK * k)
        .zip(distances.par_chunks_mut(QUERY_CHUNK * k))
        .enumerate()
        .for_each(|(chunk, (idx_out, dist_out))| {
            let q0 = chunk * QUERY_CHUNK;
            let mut scored: Vec<(f64, u32)> = Vec::with_capacity(candidates);
            for (i, point) in query_points[q0..(q0 + QUERY_CHUNK).min(nq)]
                .iter()
                .enumerate()
            {
                let qi = q0 + i;
                let found = tree
                    .query(point)
                    .nearest_n::<SquaredEuclidean<f32>>(n_fetch)
                    .execute();
                scored.clear();
                scored.extend(
                    found
                        .iter()
                        .map(|hit| hit.item as usize)
                        .filter(|&bi| !(within && bi == qi))
                        .map(|bi| (q.key(qi, b, bi), bi as u32)),
                );
                sort_pairs(&mut scored);
                for (j, &(key, bi)) in scored.iter().take(k).enumerate() {
                    idx_out[i * k + j] = bi;
                    dist_out[i * k + j] = distance::reported(q.metric(), key);
                }
            }
        });
    Some(Knn {
        k,
        indices,
        distances,
    })
}
