//! Throughput of the exact k-NN kernel and recall of the k-d tree mode:
//! `cargo bench --bench knn_kernel` (run by tests/bench/compare.sh).
//!
//! On the file named by `KNN_BENCH_DATA` (an .npz, e.g. the benchmark's invented data), or
//! else on `KNN_BENCH_ROWS` (default 20 000) random unit rows of 512 dims: times `knn_within`
//! (k = 10, cosine and euclidean) and prints GFLOP/s counted as 2·n²·d per search, the matrix
//! product's share of the work, so the figure is comparable to an sgemm benchmark. Then runs
//! the k-d tree mode (`IndexKind::KdTree`) on the largest class and on all rows and prints its
//! recall@10 against the exact search. Before those, times the bare matrix product on the
//! search's block shape and on the linear probe's, on each kernel `embloom::linalg` has
//! (AVX-512 where the CPU has it, and `matrixmultiply`), interleaved, so their ratio is
//! measured in one run. `KNN_BENCH_PARTS` picks parts (default `products,exact,kdtree`).
//! Not a timed test: it asserts nothing.

use std::path::Path;
use std::time::Instant;

use embloom::io::{ReadOptions, read};
use embloom::linalg::{Kernel, sgemm_with};
use embloom::neighbors::{IndexKind, Metric, knn_within, knn_within_with, recall_at_k};
use embloom::seed;
use ndarray::{Array2, Axis};
use rand::Rng;
use rand_distr::StandardNormal;

fn main() {
    let (x, labels) = match std::env::var("KNN_BENCH_DATA") {
        Ok(path) => {
            let loaded = read(Path::new(&path), &ReadOptions::default())
                .unwrap_or_else(|e| panic!("cannot read {path}: {e}"));
            (loaded.dataset.x, Some(loaded.dataset.labels))
        }
        Err(_) => (random_rows(), None),
    };
    let (n, d) = x.dim();
    let parts = std::env::var("KNN_BENCH_PARTS").unwrap_or_else(|_| "products,exact,kdtree".into());
    let part = |name: &str| parts.split(',').any(|p| p == name);
    if part("products") {
        products(d);
    }
    let k = 10;
    let threads = rayon::current_num_threads();
    for metric in [Metric::Cosine, Metric::Euclidean]
        .into_iter()
        .filter(|_| part("exact"))
    {
        // Wall time and the process's CPU time of the faster of two searches: on a shared
        // machine the second says how fast the kernel runs while it has a core.
        let (best, cpu) = (0..2)
            .map(|_| {
                let (t, c) = (Instant::now(), cpu_seconds());
                let out = knn_within(x.view(), k, metric);
                std::hint::black_box(&out);
                (t.elapsed().as_secs_f64(), cpu_seconds() - c)
            })
            .fold((f64::INFINITY, 0.0), |a, b| if b.0 < a.0 { b } else { a });
        let flop = 2.0 * (n as f64) * (n as f64) * (d as f64) / 1e9;
        println!(
            "knn_within {metric:?} n={n} d={d} k={k} threads={threads}: {best:.3} s, {:.1} GFLOP/s, {:.1} GFLOP per CPU-second",
            flop / best,
            flop / cpu
        );
    }
    if !part("kdtree") {
        return;
    }
    let mut sets = Vec::new();
    if let Some(labels) = &labels {
        let mut counts = std::collections::BTreeMap::new();
        for &c in labels {
            *counts.entry(c).or_insert(0usize) += 1;
        }
        if let Some((&big, &m)) = counts.iter().max_by_key(|(_, m)| **m) {
            let rows: Vec<usize> = (0..n).filter(|&i| labels[i] == big).collect();
            sets.push((
                format!("largest class ({m} rows)"),
                x.select(Axis(0), &rows),
            ));
        }
    }
    sets.push((format!("all rows ({n})"), x.clone()));
    for (name, rows) in &sets {
        for metric in [Metric::Cosine, Metric::Euclidean] {
            let exact = knn_within(rows.view(), k, metric);
            let t = Instant::now();
            let approx = knn_within_with(IndexKind::KdTree, rows.view(), k, metric);
            let secs = t.elapsed().as_secs_f64();
            println!(
                "kdtree {metric:?} {name}: recall@{k} {:.4}, {secs:.3} s",
                recall_at_k(&approx, &exact)
            );
        }
    }
}

/// GFLOP/s of one single-threaded product per kernel, best of 5 rounds with the kernels
/// alternating, on the neighbour search's block (512 queries × 1024 base rows) and the linear
/// probe's two products per 256-row block with 100 classes.
fn products(d: usize) {
    let shapes = [
        ("knn block 512x1024", 512, d, 1024, false),
        ("probe logits 256x100", 256, d, 100, false),
        ("probe gradient 100x256^T", 100, 256, d, true),
    ];
    let kernels = [Kernel::detect(), Kernel::Portable];
    for (name, m, k, n, a_transposed) in shapes {
        let mut rng = seed::stream(2, &[seed::tag("sgemm-bench")]);
        let a_store =
            Array2::from_shape_simple_fn(if a_transposed { (k, m) } else { (m, k) }, || {
                rng.sample::<f32, _>(StandardNormal)
            });
        let a = if a_transposed {
            a_store.t()
        } else {
            a_store.view()
        };
        let b_store = Array2::from_shape_simple_fn((n, k), || rng.sample::<f32, _>(StandardNormal));
        let b = b_store.t();
        let mut c = Array2::<f32>::zeros((m, n));
        let reps = (2e9 / (2.0 * (m * n * k) as f64)).ceil() as usize;
        let mut best = [f64::INFINITY; 2];
        for _ in 0..5 {
            for (slot, &kernel) in best.iter_mut().zip(&kernels) {
                let t = Instant::now();
                for _ in 0..reps {
                    sgemm_with(kernel, a, b, &mut c.view_mut(), false);
                    std::hint::black_box(&c);
                }
                *slot = slot.min(t.elapsed().as_secs_f64() / reps as f64);
            }
        }
        let gf = |s: f64| 2.0 * (m * n * k) as f64 / s / 1e9;
        println!(
            "sgemm {name} k={k}: {:?} {:.1} GFLOP/s, Portable {:.1} GFLOP/s, ratio {:.2}",
            kernels[0],
            gf(best[0]),
            gf(best[1]),
            best[1] / best[0]
        );
    }
}

/// User + system CPU time of the whole process so far, in seconds.
fn cpu_seconds() -> f64 {
    // SAFETY: getrusage only writes the struct it is given.
    let mut u: libc::rusage = unsafe { std::mem::zeroed() };
    // SAFETY: as above; RUSAGE_SELF is always valid.
    unsafe { libc::getrusage(libc::RUSAGE_SELF, &mut u) };
    let secs = |t: libc::timeval| t.tv_sec as f64 + t.tv_usec as f64 * 1e-6;
    secs(u.ru_utime) + secs(u.ru_stime)
}

fn random_rows() -> Array2<f32> {
    let n: usize = std::env::var("KNN_BENCH_ROWS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(20_000);
    let mut rng = seed::stream(1, &[seed::tag("knn-bench")]);
    let mut x = Array2::from_shape_simple_fn((n, 512), || rng.sample::<f32, _>(StandardNormal));
    for mut r in x.axis_iter_mut(Axis(0)) {
        let norm = r.iter().map(|v| v * v).sum::<f32>().sqrt();
        r.mapv_inplace(|v| v / norm);
    }
    x
}
