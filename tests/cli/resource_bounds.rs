//! Huge option values and huge magnitudes are bounded or refused up front: --knn-k is clamped
//! to a fold's training rows with a warning, --repeats is capped, --threads is capped at a few
//! per core with a note, and rows whose norms overflow float32 distance arithmetic are refused
//! naming the first such row. (f32::MAX ≈ 3.4e38, IEEE 754 binary32; the rest common
//! practice, no source.)

use crate::common;

use common::{assess_file, embloom, stderr, stdout, write_csv};

#[test]
fn huge_knn_k_is_clamped_with_a_warning() {
    let dir = common::tempdir();
    let input = dir.path().join("in.csv");
    write_csv(&input, &[30, 30], 3, 4);
    let o = assess_file(
        &input,
        &["--knn-k", "1000000000", "--probes", "knn", "--folds", "2"],
    );
    let all = stdout(&o) + &stderr(&o);
    assert!(o.status.success(), "{all}");
    assert!(
        all.contains("--knn-k 1000000000") && all.contains("using k = 30"),
        "{all}"
    );
}

#[test]
fn huge_repeats_are_refused_before_any_work() {
    let dir = common::tempdir();
    let input = dir.path().join("in.csv");
    write_csv(&input, &[30, 30], 3, 4);
    let o = assess_file(&input, &["--repeats", "1000000"]);
    assert!(!o.status.success());
    assert!(stderr(&o).contains("--repeats"), "{}", stderr(&o));
}

#[test]
fn huge_thread_counts_are_capped_with_a_note() {
    let dir = common::tempdir();
    let input = dir.path().join("in.csv");
    write_csv(&input, &[10, 10], 3, 4);
    let o = embloom(
        &["--threads", "10000", "inspect", input.to_str().unwrap()],
        &[],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(stderr(&o).contains("--threads 10000"), "{}", stderr(&o));
}

#[test]
fn rows_overflowing_f32_distances_are_refused_by_row() {
    let dir = common::tempdir();
    let input = dir.path().join("big.csv");
    let mut s = String::from("label,f0,f1\n");
    for i in 0..20 {
        let v = if i == 7 { "1e19" } else { "1" };
        s += &format!("c{},{i},{v}\n", i % 2);
    }
    std::fs::write(&input, s).unwrap();
    let out = dir.path().join("o.npz");
    let o = embloom(
        &[
            "grow",
            input.to_str().unwrap(),
            "--method",
            "interpolate",
            "-o",
            out.to_str().unwrap(),
        ],
        &[],
    );
    assert!(!o.status.success());
    assert!(stderr(&o).contains("row 7"), "{}", stderr(&o));
    assert!(!out.exists());
}

#[test]
fn classes_smaller_than_the_fold_count_are_warned_about() {
    let dir = common::tempdir();
    let input = dir.path().join("in.csv");
    // 2 of 5 thin: a warning; most thin would be a refusal (tests/cli/cli_thin_classes.rs).
    write_csv(&input, &[20, 20, 20, 1, 1], 5, 4);
    let o = assess_file(
        &input,
        &["--probes", "knn", "--methods", "none", "--folds", "5"],
    );
    let all = stdout(&o) + &stderr(&o);
    assert!(o.status.success(), "{all}");
    assert!(
        all.contains("2 of 5 classes have fewer rows than the 5 folds"),
        "{all}"
    );
}

#[test]
fn the_memory_estimate_counts_repeats() {
    // Per-fold records are kept until the report is written, so memory grows with
    // --repeats (measured: 6.0 MB peak at 1 repeat, 36 MB at 1000 on 60 rows).
    let dir = common::tempdir();
    let input = dir.path().join("in.csv");
    write_csv(&input, &[20, 20, 20], 4, 5);
    let run = |repeats: &str| {
        assess_file(
            &input,
            &[
                "--folds",
                "5",
                "--repeats",
                repeats,
                "--max-memory",
                "40M",
                "--quiet",
            ],
        )
    };
    let o = run("1000");
    assert!(!o.status.success());
    let e = stderr(&o);
    assert!(e.contains("fold records") && e.contains("--repeats"), "{e}");
    let o = run("1");
    assert!(o.status.success(), "{}", stderr(&o));
}
