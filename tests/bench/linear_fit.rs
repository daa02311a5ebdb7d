//! One linear-probe fit timed against scikit-learn's (tests/bench/linear_fit.py prints the
//! reference side): `LINEAR_BENCH_DATA=FILE.npz cargo bench --bench linear_fit`.
//!
//! Fits on the rows whose `fold` member is not 0 (the training rows of the first given fold),
//! with the default settings (λ = 1e-4, standardised columns, stop when the largest gradient
//! component is at most 1e-6, at most 500 iterations). Prints the best of three wall times, the
//! iterations and objective evaluations, the final objective, the threads and a digest of the
//! fitted weights' bits, as one JSON line.
//! Not a timed test: it asserts nothing.

use std::path::Path;
use std::time::Instant;

use embloom::io::{ReadOptions, read};
use embloom::probe::{LinearParams, LinearProbe};
use ndarray::Axis;

fn main() {
    let path = std::env::var("LINEAR_BENCH_DATA").expect("set LINEAR_BENCH_DATA to an .npz");
    let ds = read(Path::new(&path), &ReadOptions::default())
        .unwrap_or_else(|e| panic!("cannot read {path}: {e}"))
        .dataset;
    let folds = ds.folds.clone().expect("the file needs a fold member");
    let rows: Vec<usize> = (0..ds.x.nrows()).filter(|&i| folds[i] != 0).collect();
    let x = ds.x.select(Axis(0), &rows);
    let y: Vec<u32> = rows.iter().map(|&i| ds.labels[i]).collect();
    let probe = LinearProbe::new(LinearParams::default()).expect("default parameters");
    let repeats: usize = std::env::var("LINEAR_BENCH_REPEATS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(3);
    let mut best = f64::INFINITY;
    let mut model = None;
    for _ in 0..repeats {
        let t = Instant::now();
        let m = probe
            .fit(x.view(), &y, ds.n_classes(), None)
            .expect("fit succeeds");
        best = best.min(t.elapsed().as_secs_f64());
        model = Some(m);
    }
    let m = model.expect("at least one repeat");
    // FNV-1a over the bits of every weight and bias: equal digests on 1 and 2 threads show
    // the fit is bit-identical across thread counts.
    let digest = m
        .weights()
        .iter()
        .chain(m.bias().iter())
        .flat_map(|v| v.to_bits().to_le_bytes())
        .fold(0xcbf2_9ce4_8422_2325u64, |h, b| {
            (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3)
        });
    println!(
        "{{\"seconds\": {best:.4}, \"iterations\": {}, \"evaluations\": {}, \"exact_evaluations\": {}, \"objective\": {:.12e}, \"converged\": {}, \"rows\": {}, \"threads\": {}, \"digest\": \"{digest:016x}\"}}",
        m.iterations,
        m.evaluations,
        m.exact_evaluations,
        m.final_loss,
        m.converged,
        rows.len(),
        rayon::current_num_threads()
    );
}
