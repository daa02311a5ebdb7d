//! The memory estimate (src/memory.rs) against the measured peak (VmHWM of the binary, which
//! prints it at exit under EMBLOOM_REPORT_PEAK=1), and the refusal above `--max-memory`.
//!
//! Stated factor: the estimate must lie within 0.5×–2× of the measured peak. Why that wide:
//! the model counts only the large buffers (f32 matrices, the export image, parsed CSV
//! fields) and a fixed runtime allowance; the allocator's arenas, page rounding and Vec
//! growth slack vary by platform and thread count, and the point of the estimate is to
//! refuse jobs that are off by far more than 2× the machine, not to predict RSS to the byte.

use crate::common;

use std::path::Path;
use std::process::Command;

use embloom::FloatType;
use embloom::data::Dataset;
use embloom::io::{AugmentedSet, write};
use ndarray::Array2;

/// Imbalanced classes so that `--target largest` adds many rows, embeddings stored as
/// `float_type`.
fn make_set(path: &Path, counts: &[usize], dims: usize, float_type: FloatType) -> usize {
    let n: usize = counts.iter().sum();
    let mut labels = Vec::with_capacity(n);
    for (c, &k) in counts.iter().enumerate() {
        labels.extend(std::iter::repeat_n(c as u32, k));
    }
    let x = Array2::from_shape_fn((n, dims), |(i, j)| {
        common::value(i, j, 7) + labels[i] as f32
    });
    let classes = (0..counts.len()).map(|c| format!("c{c}")).collect();
    let mut ds = Dataset::new(x, labels, classes);
    ds.float_type = float_type;
    write(path, &AugmentedSet::all_real(ds), true).unwrap();
    let largest = *counts.iter().max().unwrap();
    counts.iter().map(|&c| largest - c).sum()
}

fn run_peak(args: &[&str]) -> (u64, String) {
    let o = Command::new(env!("CARGO_BIN_EXE_embloom"))
        .args(args)
        .env("EMBLOOM_REPORT_PEAK", "1")
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr).into_owned();
    assert!(o.status.success(), "{args:?}: {err}");
    let peak = err
        .lines()
        .find_map(|l| l.strip_prefix("embloom-peak-bytes: "))
        .and_then(|v| v.trim().parse().ok())
        .unwrap_or_else(|| panic!("no peak reported: {err}"));
    (peak, err)
}

fn within_factor(what: &str, estimate: u64, measured: u64) {
    let ratio = estimate as f64 / measured as f64;
    eprintln!(
        "memory {what}: estimate {:.1} MiB, measured peak {:.1} MiB, ratio {ratio:.2}",
        estimate as f64 / 1048576.0,
        measured as f64 / 1048576.0
    );
    assert!(
        (0.5..=2.0).contains(&ratio),
        "{what}: estimate {estimate} vs measured {measured} (ratio {ratio:.2})"
    );
}

#[test]
fn grow_estimate_matches_measured_peak() {
    let dir = tempfile::tempdir().unwrap();
    for (input, output, counts, dims, stored) in [
        (
            "in.npz",
            "out.npz",
            vec![60_000, 30_000, 10_000],
            64,
            FloatType::F32,
        ),
        (
            "in.csv",
            "out.csv",
            vec![20_000, 8_000, 2_000],
            32,
            FloatType::F32,
        ),
        // f64 input keeps its f64 values beside the f32 matrix and writes f64.
        (
            "in64.npz",
            "out64.npz",
            vec![60_000, 30_000, 10_000],
            64,
            FloatType::F64,
        ),
        (
            "in64.safetensors",
            "out64.safetensors",
            vec![30_000, 15_000, 5_000],
            64,
            FloatType::F64,
        ),
    ] {
        let inp = dir.path().join(input);
        let out = dir.path().join(output);
        let synthetic = make_set(&inp, &counts, dims, stored);
        let rows: usize = counts.iter().sum();
        let (peak, _) = run_peak(&[
            "--threads",
            "2",
            "grow",
            inp.to_str().unwrap(),
            "--method",
            "interpolate",
            "--target",
            "largest",
            "--output",
            out.to_str().unwrap(),
            "--quiet",
        ]);
        let est = embloom::memory::for_grow(&inp, rows, dims, synthetic, &out, stored);
        within_factor(&format!("grow {input} -> {output}"), est.bytes, peak);
    }
}

#[test]
fn assess_estimate_matches_measured_peak() {
    let dir = tempfile::tempdir().unwrap();
    let inp = dir.path().join("in.npz");
    let counts = [30_000, 12_000, 3_000];
    let dims = 48;
    let synthetic = make_set(&inp, &counts, dims, FloatType::F32);
    let rows: usize = counts.iter().sum();
    let (peak, _) = run_peak(&[
        "--threads",
        "2",
        "assess",
        inp.to_str().unwrap(),
        "--methods",
        "interpolate",
        "--probes",
        "knn,linear",
        "--folds",
        "2",
        "--target",
        "largest",
        "--linear-max-iter",
        "20",
        "--no-diagnostics",
        "--quiet",
    ]);
    let est = embloom::memory::for_assess(&inp, rows, dims, synthetic, 2, true, FloatType::F32);
    within_factor("assess npz", est.bytes, peak);
}

#[test]
fn assess_knn_estimate_with_its_neighbour_search_matches_measured_peak() {
    // The k-NN probe alone: the stages are the matrix, the fold copies, the synthetic rows and
    // the test-to-real search (its results and per-worker score blocks).
    let dir = tempfile::tempdir().unwrap();
    let inp = dir.path().join("in.npz");
    let counts = [40_000, 16_000, 4_000];
    let dims = 32;
    let synthetic = make_set(&inp, &counts, dims, FloatType::F32);
    let rows: usize = counts.iter().sum();
    let (peak, _) = run_peak(&[
        "--threads",
        "2",
        "assess",
        inp.to_str().unwrap(),
        "--methods",
        "interpolate",
        "--probes",
        "knn",
        "--folds",
        "2",
        "--target",
        "largest",
        "--no-diagnostics",
        "--quiet",
    ]);
    let test = rows / 2;
    let est = embloom::memory::for_assess(&inp, rows, dims, synthetic, 2, false, FloatType::F32)
        .with_neighbour_search(test, rows - test, dims, 10, 2);
    within_factor("assess knn npz", est.bytes, peak);
}

#[test]
fn assess_principal_noise_estimate_with_its_pca_matches_measured_peak() {
    // Wide rows, so the per-class PCA fits (two grown classes, in parallel on two threads)
    // weigh as much as the matrix.
    let dir = tempfile::tempdir().unwrap();
    let inp = dir.path().join("in.npz");
    let counts = [6_000, 3_000, 1_500];
    let dims = 200;
    let synthetic = make_set(&inp, &counts, dims, FloatType::F32);
    let rows: usize = counts.iter().sum();
    let (peak, _) = run_peak(&[
        "--threads",
        "2",
        "assess",
        inp.to_str().unwrap(),
        "--methods",
        "principal-noise",
        "--probes",
        "linear",
        "--folds",
        "2",
        "--target",
        "largest",
        "--linear-max-iter",
        "20",
        "--no-diagnostics",
        "--quiet",
    ]);
    let est = embloom::memory::for_assess(&inp, rows, dims, synthetic, 2, true, FloatType::F32)
        .with_pca(3_000 - 3_000 / 2, dims, 2);
    within_factor("assess principal-noise npz", est.bytes, peak);
}

#[test]
fn refuses_above_max_memory_before_growing() {
    let dir = tempfile::tempdir().unwrap();
    let inp = dir.path().join("in.npz");
    let out = dir.path().join("out.npz");
    make_set(&inp, &[4000, 100], 32, FloatType::F32);
    let o = common::embloom(
        &[
            "grow",
            inp.to_str().unwrap(),
            "--method",
            "interpolate",
            "--target",
            "largest",
            "--output",
            out.to_str().unwrap(),
            "--max-memory",
            "1M",
        ],
        &[],
    );
    let err = common::stderr(&o);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(
        err.contains("--max-memory") && err.contains("--classes"),
        "{err}"
    );
    assert!(err.contains("--target"), "{err}");
    assert!(!out.exists());
    let o = common::assess_file(&inp, &["--max-memory", "1M", "--folds", "2"]);
    let err = common::stderr(&o);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(
        err.contains("fewer folds") || err.contains("--folds"),
        "{err}"
    );
    // A generous limit lets the same job through.
    let o = common::embloom(
        &[
            "grow",
            inp.to_str().unwrap(),
            "--method",
            "interpolate",
            "--output",
            out.to_str().unwrap(),
            "--max-memory",
            "4G",
            "--quiet",
        ],
        &[],
    );
    assert!(o.status.success(), "{}", common::stderr(&o));
}
