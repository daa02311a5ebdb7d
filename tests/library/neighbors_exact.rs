//! The exact k-NN engine against a plain f64 brute force, and the k-d tree's recall.

use embloom::neighbors::{
    IndexKind, Knn, Metric, knn, knn_with, knn_within, knn_within_with, recall_at_k, try_knn,
};
use embloom::seed;
use ndarray::{Array2, ArrayView2, Axis, s};
use rand::Rng;
use rand_distr::StandardNormal;

fn normal(rows: usize, cols: usize, stream: u64) -> Array2<f32> {
    let mut rng = seed::stream(7, &[stream]);
    Array2::from_shape_simple_fn((rows, cols), || rng.sample::<f32, _>(StandardNormal))
}

fn unit_rows(mut x: Array2<f32>) -> Array2<f32> {
    for mut r in x.axis_iter_mut(Axis(0)) {
        let n = r.iter().map(|v| v * v).sum::<f32>().sqrt();
        r.mapv_inplace(|v| v / n);
    }
    x
}

/// Straightforward f64 brute force (common practice, no source): every pair scored with
/// Σ(a−b)² (euclidean) or 1 − a·b/(‖a‖‖b‖) with zero rows at similarity 0 (cosine), all
/// sums left to right; sorted by (score, index); the first k kept.
fn brute(q: ArrayView2<f32>, b: ArrayView2<f32>, k: usize, metric: Metric, within: bool) -> Knn {
    let avail = if within {
        b.nrows().saturating_sub(1)
    } else {
        b.nrows()
    };
    let k = k.min(avail);
    let norm = |r: &[f32]| {
        r.iter()
            .map(|&v| v as f64 * v as f64)
            .fold(0.0, |a, t| a + t)
            .sqrt()
    };
    let (mut indices, mut distances) = (Vec::new(), Vec::new());
    if k == 0 {
        return Knn {
            k: 0,
            indices,
            distances,
        };
    }
    for (qi, qr) in q.outer_iter().enumerate() {
        let a = qr.to_vec();
        let mut all: Vec<(f64, u32)> = Vec::new();
        for (bi, br) in b.outer_iter().enumerate() {
            if within && bi == qi {
                continue;
            }
            let c = br.to_vec();
            let key = match metric {
                Metric::Euclidean => a
                    .iter()
                    .zip(&c)
                    .map(|(&x, &y)| (x as f64 - y as f64).powi(2))
                    .fold(0.0, |s, t| s + t),
                Metric::Cosine => {
                    let (na, nb) = (norm(&a), norm(&c));
                    if na == 0.0 || nb == 0.0 {
                        1.0
                    } else {
                        let dot = a.iter().zip(&c).map(|(&x, &y)| x as f64 * y as f64);
                        1.0 - dot.fold(0.0, |s, t| s + t) / (na * nb)
                    }
                }
            };
            all.push((key, bi as u32));
        }
        all.sort_by(|x, y| x.0.total_cmp(&y.0).then(x.1.cmp(&y.1)));
        for &(key, bi) in &all[..k] {
            indices.push(bi);
            distances.push(match metric {
                Metric::Euclidean => key.max(0.0).sqrt() as f32,
                Metric::Cosine => key.max(0.0) as f32,
            });
        }
    }
    Knn {
        k,
        indices,
        distances,
    }
}

/// Base with exact duplicate rows (so that ties must fall to the lower index).
fn with_duplicates(mut x: Array2<f32>) -> Array2<f32> {
    for (src, dst) in [(5, 17), (5, 100), (40, 41), (3, 2), (7, 250)] {
        if dst < x.nrows() {
            let row = x.row(src).to_owned();
            x.row_mut(dst).assign(&row);
        }
    }
    x
}

#[test]
fn knn_equals_brute_force() {
    // Common practice, no source: exact search must equal the f64 brute force.
    let base = with_duplicates(normal(300, 37, 1));
    let mut queries = normal(123, 37, 2);
    queries.row_mut(0).assign(&base.row(5));
    queries.row_mut(1).assign(&base.row(40));
    for metric in [Metric::Euclidean, Metric::Cosine] {
        for k in [1, 5, 17] {
            let got = knn(queries.view(), base.view(), k, metric);
            assert_eq!(
                got,
                brute(queries.view(), base.view(), k, metric, false),
                "{metric:?} k={k}"
            );
        }
    }
    // Query 0 duplicates base rows 5, 17 and 100: all at distance 0, in index order.
    let got = knn(queries.view(), base.view(), 3, Metric::Euclidean);
    assert_eq!(got.row(0), (&[5u32, 17, 100][..], &[0f32, 0.0, 0.0][..]));
}

#[test]
fn knn_within_equals_brute_force_excluding_self() {
    // Common practice, no source: a row is never its own neighbour; its duplicates are.
    let x = with_duplicates(normal(260, 24, 3));
    for metric in [Metric::Euclidean, Metric::Cosine] {
        let got = knn_within(x.view(), 6, metric);
        assert_eq!(
            got,
            brute(x.view(), x.view(), 6, metric, true),
            "{metric:?}"
        );
        for i in 0..x.nrows() {
            assert!(!got.row(i).0.contains(&(i as u32)));
        }
        assert_eq!(got.row(17).0[..2], [5, 100]);
        assert_eq!(got.row(5).0[..2], [17, 100]);
    }
}

#[test]
fn crosses_block_boundaries() {
    // Common practice, no source: more than one 256-row query block and 2048-row base block.
    let base = with_duplicates(normal(2300, 12, 4));
    let queries = normal(300, 12, 5);
    for metric in [Metric::Euclidean, Metric::Cosine] {
        let got = knn(queries.view(), base.view(), 4, metric);
        assert_eq!(got, brute(queries.view(), base.view(), 4, metric, false));
    }
    let x = base.slice(s![..600, ..]);
    let got = knn_within(x, 3, Metric::Euclidean);
    assert_eq!(got, brute(x, x, 3, Metric::Euclidean, true));
}

#[test]
fn unit_rows_and_zero_rows_for_cosine() {
    // Common practice, no source: on unit rows cosine distance is 1 − a·b; a zero row has
    // similarity 0 with everything (distance 1).
    let mut x = unit_rows(normal(200, 16, 6));
    x.row_mut(9).fill(0.0);
    let got = knn_within(x.view(), 8, Metric::Cosine);
    assert_eq!(got, brute(x.view(), x.view(), 8, Metric::Cosine, true));
    let q = x.slice(s![9..10, ..]);
    let z = knn(q, x.view(), 3, Metric::Cosine);
    assert_eq!(z.row(0), (&[0u32, 1, 2][..], &[1f32, 1.0, 1.0][..]));
}

#[test]
fn heavy_ties_and_cancellation_stay_exact() {
    // Common practice, no source. Many identical rows (more than the candidate margin) and
    // rows far from the origin (‖a‖²+‖b‖²−2a·b cancels in f32) force the proof to fail and
    // the rescan to run; the result must still equal the brute force.
    let mut x = normal(400, 20, 7);
    let dup = x.row(0).to_owned();
    for i in (0..400).step_by(5) {
        x.row_mut(i).assign(&dup);
    }
    for metric in [Metric::Euclidean, Metric::Cosine] {
        let got = knn_within(x.view(), 12, metric);
        assert_eq!(
            got,
            brute(x.view(), x.view(), 12, metric, true),
            "ties {metric:?}"
        );
    }
    let far = normal(300, 20, 8).mapv(|v| 1000.0 + 0.01 * v);
    let got = knn_within(far.view(), 5, Metric::Euclidean);
    assert_eq!(
        got,
        brute(far.view(), far.view(), 5, Metric::Euclidean, true),
        "offset"
    );
}

#[test]
fn k_is_clamped_and_degenerate_inputs_are_empty() {
    // Common practice, no source.
    let x = normal(50, 8, 9);
    let all = knn(x.view(), x.view(), 1000, Metric::Euclidean);
    assert_eq!(all.k, 50);
    assert_eq!(all, brute(x.view(), x.view(), 50, Metric::Euclidean, false));
    let within = knn_within(x.view(), 1000, Metric::Cosine);
    assert_eq!(within.k, 49);
    assert_eq!(within, brute(x.view(), x.view(), 49, Metric::Cosine, true));
    let empty = Array2::<f32>::zeros((0, 8));
    for r in [
        knn(x.view(), x.view(), 0, Metric::Euclidean),
        knn(x.view(), empty.view(), 3, Metric::Euclidean),
        knn_within(x.slice(s![..1, ..]), 3, Metric::Cosine),
        knn_within(empty.view(), 3, Metric::Cosine),
    ] {
        assert_eq!((r.k, r.n_queries(), r.indices.len()), (0, 0, 0));
    }
    let none = knn(empty.view(), x.view(), 3, Metric::Euclidean);
    assert_eq!((none.k, none.n_queries()), (3, 0));
    assert!(try_knn(x.view(), normal(4, 7, 10).view(), 2, Metric::Cosine).is_err());
}

#[test]
fn non_standard_layout_input() {
    // Common practice, no source: a transposed (column-major) view gives the same answer.
    let x = normal(40, 90, 11);
    let xt = x.t().to_owned();
    let v = xt.t();
    assert_eq!(
        knn_within(v, 4, Metric::Euclidean),
        brute(x.view(), x.view(), 4, Metric::Euclidean, true)
    );
}

#[test]
fn thread_count_does_not_change_results() {
    // Common practice, no source: 1 and 2 rayon threads give identical output.
    let base = with_duplicates(normal(700, 33, 12));
    let run = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| {
                (
                    knn_within(base.view(), 9, Metric::Cosine),
                    knn(base.slice(s![..300, ..]), base.view(), 9, Metric::Euclidean),
                    knn_within_with(IndexKind::KdTree, base.view(), 9, Metric::Euclidean),
                )
            })
    };
    assert_eq!(run(1), run(2));
}

/// `clusters` Gaussian blobs, each spread along its own `latent`-dimensional subspace plus
/// small isotropic noise: low intrinsic dimension, as PCA projection assumes.
fn clustered(clusters: usize, per: usize, d: usize, latent: usize, stream: u64) -> Array2<f32> {
    let centres = normal(clusters, d, stream).mapv(|v| 4.0 * v);
    let mut out = Array2::<f32>::zeros((clusters * per, d));
    let noise = normal(clusters * per, d, stream + 1);
    for c in 0..clusters {
        let basis = normal(latent, d, stream + 2 + c as u64);
        let z = normal(per, latent, stream + 100 + c as u64);
        let pts = z.dot(&basis);
        for i in 0..per {
            let r = c * per + i;
            let row = &centres.row(c) + &pts.row(i) + &noise.row(r).mapv(|v| 0.02 * v);
            out.row_mut(r).assign(&row);
        }
    }
    out
}

#[test]
fn kdtree_recall_on_clustered_data() {
    // Sanity threshold (common practice, no source): on clustered data of low intrinsic
    // dimension the approximate index should find at least 90% of the true 10 neighbours.
    let x = clustered(5, 400, 64, 3, 20);
    for metric in [Metric::Euclidean, Metric::Cosine] {
        let exact = knn_within(x.view(), 10, metric);
        let approx = knn_within_with(IndexKind::KdTree, x.view(), 10, metric);
        let r = recall_at_k(&approx, &exact);
        assert!(r >= 0.9, "{metric:?} recall {r}");
        for i in 0..x.nrows() {
            assert!(!approx.row(i).0.contains(&(i as u32)));
        }
        let q = clustered(5, 40, 64, 3, 20).slice(s![..100, ..]).to_owned();
        let exact = knn(q.view(), x.view(), 10, metric);
        let approx = knn_with(IndexKind::KdTree, q.view(), x.view(), 10, metric);
        let r = recall_at_k(&approx, &exact);
        assert!(r >= 0.9, "{metric:?} query recall {r}");
    }
}

#[test]
fn kdtree_small_base_is_exact_and_recall_definition() {
    // Common practice, no source: with fewer base rows than the tree would fetch, the k-d
    // tree mode answers exactly; recall of a result against itself is 1, against disjoint
    // neighbours 0.
    let x = normal(30, 10, 30);
    let exact = knn_within(x.view(), 10, Metric::Euclidean);
    assert_eq!(
        knn_within_with(IndexKind::KdTree, x.view(), 10, Metric::Euclidean),
        exact
    );
    assert_eq!(recall_at_k(&exact, &exact), 1.0);
    let a = Knn {
        k: 2,
        indices: vec![0, 1, 2, 3],
        distances: vec![0.0; 4],
    };
    let b = Knn {
        k: 2,
        indices: vec![1, 5, 6, 7],
        distances: vec![0.0; 4],
    };
    assert_eq!(recall_at_k(&a, &b), 0.25);
}

/// A fold's rows searched in place through their index lists (`data::Rows`) give exactly
/// what a search over the same rows copied out gives: same neighbours (as positions among the
/// picked rows), same distances, same tie order, for queries, base and the within-set search.
#[test]
fn picked_rows_search_as_their_copies() {
    use embloom::data::Rows;
    // common practice, no source: indexing the rows must not change any result.
    let x = normal(300, 24, 41);
    // Every third row is a test row; the rest, in order, train. Two exact copies make ties.
    let mut x = x;
    let copy = x.row(5).to_owned();
    x.row_mut(7).assign(&copy);
    let test: Vec<usize> = (0..300).filter(|i| i % 3 == 0).collect();
    let train: Vec<usize> = (0..300).filter(|i| i % 3 != 0).collect();
    let (test_x, train_x) = (x.select(Axis(0), &test), x.select(Axis(0), &train));
    for metric in [Metric::Cosine, Metric::Euclidean] {
        let picked = knn(
            Rows::picked(x.view(), &test),
            Rows::picked(x.view(), &train),
            7,
            metric,
        );
        assert_eq!(picked, knn(test_x.view(), train_x.view(), 7, metric));
        assert_eq!(
            knn_within(Rows::picked(x.view(), &train), 5, metric),
            knn_within(train_x.view(), 5, metric)
        );
        let tree = knn_with(
            IndexKind::KdTree,
            Rows::picked(x.view(), &test),
            Rows::picked(x.view(), &train),
            7,
            metric,
        );
        assert_eq!(
            tree,
            knn_with(IndexKind::KdTree, test_x.view(), train_x.view(), 7, metric)
        );
    }
}
