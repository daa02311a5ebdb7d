//! Throughput of the exact k-NN kernel: `cargo bench --bench knn_kernel`.
//!
//! Times `knn_within` on 20 000 × 512 random unit rows (k = 10) and prints GFLOP/s counted
//! as 2·n_q·n_b·d per search, the matrix product's share of the work, so the figure is
//! comparable to an sgemm benchmark. Not a timed test: it asserts nothing.

use std::time::Instant;

use embloom::neighbors::{Metric, knn_within};
use embloom::seed;
use ndarray::{Array2, Axis};
use rand::Rng;
use rand_distr::StandardNormal;

fn main() {
    let n: usize = std::env::var("KNN_BENCH_ROWS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(20_000);
    let d = 512;
    let k = 10;
    let mut rng = seed::stream(1, &[seed::tag("knn-bench")]);
    let mut x = Array2::from_shape_simple_fn((n, d), || rng.sample::<f32, _>(StandardNormal));
    for mut r in x.axis_iter_mut(Axis(0)) {
        let norm = r.iter().map(|v| v * v).sum::<f32>().sqrt();
        r.mapv_inplace(|v| v / norm);
    }
    let threads = rayon::current_num_threads();
    for metric in [Metric::Cosine, Metric::Euclidean] {
        let t = Instant::now();
        let out = knn_within(x.view(), k, metric);
        let secs = t.elapsed().as_secs_f64();
        let gflops = 2.0 * (n as f64) * (n as f64) * (d as f64) / secs / 1e9;
        println!(
            "knn_within {metric:?} n={n} d={d} k={k} threads={threads}: {secs:.3} s, {gflops:.1} GFLOP/s (first neighbour of row 0: {})",
            out.row(0).0[0]
        );
    }
}
