//! `embloom assess` on the terminal: each warning once per run with the folds it concerns,
//! the thin-class warning before the work, the caution once.

use crate::common;

use common::*;

#[test]
fn non_convergence_is_one_warning_with_its_folds_and_names_both_knobs() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[30, 30, 12], 6, 5);
    let o = assess_file(
        &input,
        &[
            "--probes",
            "linear",
            "--methods",
            "interpolate",
            "--folds",
            "3",
            "--linear-max-iter",
            "1",
            "--no-diagnostics",
            "--quiet",
        ],
    );
    let out = stdout(&o);
    assert!(o.status.success(), "{}", stderr(&o));
    for method in ["none", "interpolate"] {
        let needle = format!("did not converge for {method} ");
        assert_eq!(out.matches(&needle).count(), 1, "{out}");
    }
    assert!(out.contains("--linear-max-iter"), "{out}");
    assert!(out.contains("(in every fold)"), "{out}");
    assert_eq!(
        out.matches("Synthetic rows are not observations").count(),
        1,
        "{out}"
    );
}

#[test]
fn thin_classes_are_warned_about_before_the_work_and_not_again() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[20, 20, 2], 4, 6);
    let o = assess_file(
        &input,
        &[
            "--probes",
            "knn",
            "--methods",
            "none",
            "--folds",
            "4",
            "--quiet",
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let err = stderr(&o);
    assert!(
        err.contains("1 of 3 classes have fewer rows than the 4 folds"),
        "{err}"
    );
    assert!(!stdout(&o).contains("fewer rows than"), "{}", stdout(&o));
}

#[test]
fn results_config_reads_back_as_the_command_line_spells_it() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[30, 10], 4, 7);
    let f = input.to_str().unwrap();
    let run = |extra: &[&str]| -> serde_json::Value {
        let mut args = vec![
            "assess",
            f,
            "--probes",
            "knn",
            "--folds",
            "3",
            "--no-diagnostics",
            "--json",
            "--quiet",
        ];
        args.extend(extra);
        let o = embloom(&args, &[]);
        assert!(o.status.success(), "{}", stderr(&o));
        serde_json::from_str(&stdout(&o)).unwrap()
    };
    let r = run(&[
        "--methods",
        "extrapolate",
        "--magnitude",
        "0.3",
        "--target",
        "x2",
    ]);
    assert_eq!(r["config"]["target"], "x2");
    assert_eq!(r["config"]["augment"]["magnitude"], 0.3);
    let cmd = r["command_line"].as_str().unwrap();
    assert!(
        cmd.starts_with("embloom assess ") && cmd.contains("--magnitude 0.3"),
        "{cmd}"
    );
    assert_eq!(r["input"]["sha256"].as_str().unwrap().len(), 64);
    assert!(r["embloom_version"].is_string());
    let r = run(&["--methods", "interpolate,extrapolate", "--target", "50"]);
    assert_eq!(r["config"]["target"], "50");
    // The defaults of the methods that read a magnitude, not null.
    assert_eq!(r["config"]["augment"]["magnitude"]["extrapolate"], 0.5);
    let r = run(&["--methods", "interpolate"]);
    assert_eq!(r["config"]["target"], "median");
    assert_eq!(r["config"]["knn"]["standardize"], false);
    let r = run(&["--methods", "interpolate", "--knn-standardize", "on"]);
    assert_eq!(r["config"]["knn"]["standardize"], true);
    let o = embloom(&["assess", f, "--knn-standardize", "maybe"], &[]);
    assert!(!o.status.success());
    assert!(stderr(&o).contains("--knn-standardize"), "{}", stderr(&o));
}

/// An `.npy` matrix with its labels in another file: results.json and the report name the
/// labels file with its SHA-256, checked against coreutils' `sha256sum` (an independent
/// implementation of FIPS 180-4).
#[test]
fn a_separate_labels_file_is_named_with_its_sha256() {
    let dir = tempdir();
    let (x_path, y_path) = (p(dir.path(), "x.npy"), p(dir.path(), "y.npy"));
    let counts = [24usize, 12];
    let dims = 4;
    let n: usize = counts.iter().sum();
    let x: Vec<f32> = (0..n * dims)
        .map(|k| value(k / dims, k % dims, 3))
        .collect();
    let y: Vec<i64> = counts
        .iter()
        .enumerate()
        .flat_map(|(c, &m)| std::iter::repeat_n(c as i64, m))
        .collect();
    let xb: Vec<u8> = x.iter().flat_map(|v| v.to_le_bytes()).collect();
    let yb: Vec<u8> = y.iter().flat_map(|v| v.to_le_bytes()).collect();
    write_npy(&x_path, "<f4", &[n, dims], &xb);
    write_npy(&y_path, "<i8", &[n], &yb);
    let report = p(dir.path(), "report");
    let o = assess_file(
        &x_path,
        &[
            "--labels",
            y_path.to_str().unwrap(),
            "--probes",
            "knn",
            "--folds",
            "3",
            "--no-diagnostics",
            "--json",
            "--quiet",
            "--report",
            report.to_str().unwrap(),
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let r: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    let sum = std::process::Command::new("sha256sum")
        .arg(&y_path)
        .output()
        .expect("coreutils sha256sum");
    let expected = String::from_utf8(sum.stdout).unwrap();
    let expected = expected.split_whitespace().next().unwrap();
    assert_eq!(r["input"]["labels_file"]["sha256"], expected);
    assert_eq!(r["input"]["labels_file"]["path"], y_path.to_str().unwrap());
    let html = std::fs::read_to_string(report.join("report.html")).unwrap();
    assert!(
        html.contains(expected),
        "report header names the labels file's hash"
    );
}

#[test]
fn centroid_probe_runs_beside_knn_and_lists_its_rows() {
    // Common practice, no source: `--probes knn,centroid` gives summary rows for both probes
    // and every method, and the terminal table lists the centroid rows.
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[30, 12], 4, 8);
    let f = input.to_str().unwrap();
    let args = [
        "assess",
        f,
        "--probes",
        "knn,centroid",
        "--methods",
        "interpolate",
        "--folds",
        "3",
        "--no-diagnostics",
        "--quiet",
    ];
    let o = embloom(&args, &[]);
    assert!(o.status.success(), "{}", stderr(&o));
    let out = stdout(&o);
    assert!(out.lines().any(|l| l.starts_with("centroid")), "{out}");
    let mut json_args = args.to_vec();
    json_args.push("--json");
    let o = embloom(&json_args, &[]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(v["probes"], serde_json::json!(["knn", "centroid"]));
    for method in ["none", "interpolate"] {
        let row = v["summary"]
            .as_array()
            .unwrap()
            .iter()
            .find(|r| r["method"] == method && r["probe"] == "centroid")
            .unwrap_or_else(|| panic!("no centroid row for {method}"));
        assert_eq!(row["applies"], true, "{row}");
        assert!(row["mean"].as_f64().unwrap().is_finite(), "{row}");
    }
}
