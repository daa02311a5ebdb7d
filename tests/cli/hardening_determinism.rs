//! Determinism: grow and assess give byte-identical outputs with 1 and 2 threads and with
//! the same seed twice (results.json compared without its timing field).

use crate::common;

use std::path::Path;

use serde_json::Value;

fn run(args: &[&str], threads: &str) {
    let mut argv = vec!["--threads", threads];
    argv.extend_from_slice(args);
    let o = common::embloom(&argv, &[("RAYON_NUM_THREADS", threads)]);
    assert!(o.status.success(), "{args:?}: {}", common::stderr(&o));
}

/// Removes timing fields (wall-clock figures differ run to run by nature).
fn strip_timing(v: &mut Value) {
    match v {
        Value::Object(m) => {
            // The command line names each run's own report folder.
            m.retain(|k, _| {
                !(k == "elapsed_seconds" || k.ends_with("_seconds") || k == "command_line")
            });
            m.values_mut().for_each(strip_timing);
        }
        Value::Array(a) => a.iter_mut().for_each(strip_timing),
        _ => {}
    }
}

fn results(dir: &Path) -> Value {
    let text = std::fs::read_to_string(dir.join("results.json")).unwrap();
    let mut v: Value = serde_json::from_str(&text).unwrap();
    strip_timing(&mut v);
    v
}

#[test]
fn grow_is_byte_identical_across_threads_and_runs() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("in.csv");
    common::write_csv(&input, &[400, 60, 25, 3], 24, 11);
    for method in [
        "interpolate",
        "extrapolate",
        "principal-noise",
        "gaussian-noise",
    ] {
        let mut outs = Vec::new();
        for (i, threads) in ["1", "2", "2"].iter().enumerate() {
            let out = dir.path().join(format!("{method}-{i}.npz"));
            run(
                &[
                    "grow",
                    input.to_str().unwrap(),
                    "--method",
                    method,
                    "--target",
                    "largest",
                    "--seed",
                    "42",
                    "--output",
                    out.to_str().unwrap(),
                    "--quiet",
                ],
                threads,
            );
            outs.push(std::fs::read(&out).unwrap());
        }
        assert!(outs[0].len() > 1000);
        assert!(outs[0] == outs[1], "{method}: 1 vs 2 threads differ");
        assert!(outs[1] == outs[2], "{method}: same seed twice differs");
    }
}

#[test]
fn assess_results_are_identical_across_threads_and_runs() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("in.csv");
    common::write_csv(&input, &[150, 40, 12], 16, 5);
    let mut all = Vec::new();
    let mut csvs = Vec::new();
    for (i, threads) in ["1", "2", "2"].iter().enumerate() {
        let report = dir.path().join(format!("report-{i}"));
        run(
            &[
                "assess",
                input.to_str().unwrap(),
                "--methods",
                "interpolate,extrapolate,principal-noise",
                "--probes",
                "knn,linear",
                "--folds",
                "3",
                "--repeats",
                "2",
                "--seed",
                "7",
                "--report",
                report.to_str().unwrap(),
                "--quiet",
            ],
            threads,
        );
        all.push(results(&report));
        csvs.push(
            [
                "summary.csv",
                "per_class.csv",
                "confusion_changes.csv",
                "folds.csv",
                "diagnostics.csv",
            ]
            .map(|f| std::fs::read(report.join(f)).unwrap()),
        );
    }
    assert_eq!(all[0], all[1], "results.json: 1 vs 2 threads differ");
    assert_eq!(all[1], all[2], "results.json: same seed twice differs");
    assert!(
        csvs[0] == csvs[1] && csvs[1] == csvs[2],
        "CSV tables differ"
    );
    // And a different seed does change the results (the comparison is not vacuous).
    let other = dir.path().join("report-other");
    run(
        &[
            "assess",
            input.to_str().unwrap(),
            "--methods",
            "interpolate,extrapolate,principal-noise",
            "--folds",
            "3",
            "--repeats",
            "2",
            "--seed",
            "8",
            "--report",
            other.to_str().unwrap(),
            "--quiet",
        ],
        "2",
    );
    assert_ne!(results(&other), all[0]);
}
