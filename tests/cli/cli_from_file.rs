//! `assess` on a file `grow` wrote: the file's synthetic rows are one more method,
//! `<origin> (from file)`, in every output, gated per fold by their parent and partner.

use std::path::Path;

use crate::common;

use common::*;
use serde_json::Value;

/// scikit-learn's digits (the committed fixture, written by tests/reference/probe_digits.py)
/// without its fold column, with classes 3 and 8 cut to 20 and 15 rows so `grow` has rare
/// classes to grow.
fn rare_digits(path: &Path) {
    let fixture = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/probe/digits.csv");
    let text = std::fs::read_to_string(fixture).expect("the digits fixture reads");
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let fold = header.iter().position(|h| *h == "fold").unwrap();
    let drop_fold = |l: &str| {
        l.split(',')
            .enumerate()
            .filter(|(i, _)| *i != fold)
            .map(|(_, v)| v)
            .collect::<Vec<_>>()
            .join(",")
    };
    let mut out = drop_fold(&header.join(",")) + "\n";
    let mut seen = std::collections::HashMap::<String, usize>::new();
    for l in lines {
        let label = l.split(',').next().unwrap().to_string();
        let n = seen.entry(label.clone()).or_default();
        *n += 1;
        let cap = match label.as_str() {
            "3" => 20,
            "8" => 15,
            _ => usize::MAX,
        };
        if *n <= cap {
            out += &(drop_fold(l) + "\n");
        }
    }
    std::fs::write(path, out).unwrap();
}

fn grow(input: &Path, out: &Path) -> Value {
    let o = grow_file(input, out, &["--method", "interpolate", "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    serde_json::from_str(&stdout(&o)).unwrap()
}

const FROM_FILE: &str = "interpolate (from file)";

fn mean(v: &Value, method: &str, metric: &str) -> f64 {
    v["summary"]
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["method"] == method && r["probe"] == "knn" && r["metric"] == metric)
        .unwrap_or_else(|| panic!("no {method} {metric} row"))[if method == "none" {
        "mean"
    } else {
        "delta_mean"
    }]
    .as_f64()
    .unwrap()
}

#[test]
fn a_grown_digits_file_adds_its_rows_as_a_method_in_every_output() {
    let dir = tempdir();
    let input = p(dir.path(), "digits.csv");
    rare_digits(&input);
    let grown = p(dir.path(), "g.npz");
    let summary = grow(&input, &grown);
    let synthetic = summary["synthetic_rows"].as_u64().unwrap() as usize;
    assert!(synthetic > 100, "{summary}");
    let report = p(dir.path(), "report");
    let o = assess_file(
        &grown,
        &[
            "--methods",
            "none,interpolate",
            "--probes",
            "knn",
            "--folds",
            "3",
            "--no-diagnostics",
            "--report",
            report.to_str().unwrap(),
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let table = stdout(&o);
    assert!(table.contains(FROM_FILE), "{table}");

    let v: Value =
        serde_json::from_str(&std::fs::read_to_string(report.join("results.json")).unwrap())
            .unwrap();
    assert_eq!(
        v["methods"],
        serde_json::json!(["none", "interpolate", FROM_FILE])
    );
    for file in ["summary.csv", "folds.csv", "per_class.csv", "report.html"] {
        let text = std::fs::read_to_string(report.join(file)).unwrap();
        assert!(text.contains(FROM_FILE), "{file}");
    }
    // Plausible, not trivial: each fold keeps the rows whose parent and partner are both
    // training rows. With 3 stratified folds each is a training row with probability 2/3, so
    // about (2/3)² ≈ 0.44 of the rows are kept (fold arithmetic, no source); never none, never all.
    let kept: Vec<f64> = v["folds"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|f| f["method"] == FROM_FILE)
        .map(|f| f["train_synthetic"].as_f64().unwrap() / synthetic as f64)
        .collect();
    assert_eq!(kept.len(), 3);
    for k in &kept {
        assert!((0.3..0.6).contains(k), "kept share {k}");
    }
    // On digits the file's rows help the rare classes as the in-fold method does (both were
    // made by the same rule from nearly the same rows); measured +0.17 for both with 5 folds.
    let from_file = mean(&v, FROM_FILE, "grown_class_recall");
    let in_fold = mean(&v, "interpolate", "grown_class_recall");
    assert!(from_file > 0.05, "delta {from_file}");
    assert!(
        (from_file - in_fold).abs() < 0.1,
        "{from_file} vs {in_fold}"
    );
    assert!(mean(&v, "none", "balanced_accuracy") > 0.5);
}

#[test]
fn each_origin_of_a_file_is_a_method_of_its_own() {
    // A file whose synthetic rows name two methods (the last few relabelled by hand here)
    // gives one from-file method per name, in order of first appearance.
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[30, 6, 12], 4, 1);
    let grown = p(dir.path(), "g.csv");
    grow(&input, &grown);
    let text = std::fs::read_to_string(&grown).unwrap();
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    let origin = lines[0].split(',').position(|h| h == "origin").unwrap();
    let n = lines.len();
    for line in &mut lines[n - 4..] {
        let mut f: Vec<&str> = line.split(',').collect();
        assert_eq!(f[origin], "interpolate");
        f[origin] = "extrapolate";
        *line = f.join(",");
    }
    std::fs::write(&grown, lines.join("\n") + "\n").unwrap();
    let o = assess_file(
        &grown,
        &[
            "--methods",
            "none",
            "--probes",
            "knn",
            "--folds",
            "3",
            "--no-diagnostics",
            "--json",
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let v: Value = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(
        v["methods"],
        serde_json::json!(["none", FROM_FILE, "extrapolate (from file)"])
    );
}

#[test]
fn a_synthetic_row_naming_no_real_row_is_refused_with_its_row() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[30, 6, 12], 4, 1);
    let grown = p(dir.path(), "g.csv");
    grow(&input, &grown);
    let text = std::fs::read_to_string(&grown).unwrap();
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    let parent = lines[0].split(',').position(|h| h == "parent").unwrap();
    let last = lines.len() - 1;
    let mut f: Vec<String> = lines[last].split(',').map(str::to_string).collect();
    f[parent] = "9999".into();
    lines[last] = f.join(",");
    std::fs::write(&grown, lines.join("\n") + "\n").unwrap();
    let o = assess_file(&grown, &["--probes", "knn"]);
    assert!(!o.status.success());
    let err = stderr(&o);
    assert!(
        err.contains("g.csv")
            && err.contains("parent 9999")
            && err.contains(&format!("row {}", last - 1)),
        "{err}"
    );
}

#[test]
fn a_sweep_of_a_grown_file_says_its_rows_are_not_swept() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[30, 6, 12], 4, 1);
    let grown = p(dir.path(), "g.npz");
    grow(&input, &grown);
    let sweep = |f: &Path| {
        let o = embloom(
            &[
                "sweep",
                f.to_str().unwrap(),
                "--method",
                "interpolate",
                "--knob",
                "neighbours",
                "--values",
                "2,4",
                "--probes",
                "knn",
                "--folds",
                "3",
                "--json",
                "--quiet",
            ],
            &[],
        );
        assert!(o.status.success(), "{}", stderr(&o));
        serde_json::from_str::<Value>(&stdout(&o)).unwrap()
    };
    let on_grown = sweep(&grown);
    let warnings = on_grown["warnings"].to_string();
    assert!(warnings.contains("not part of the sweep"), "{warnings}");
    // The sweep itself is that of the real rows alone.
    assert_eq!(on_grown["points"], sweep(&input)["points"]);
}

#[test]
fn planted_copies_of_held_out_rows_change_nothing() {
    // The file carries its folds (0 and 1). Planted rows copy each fold-0 row, name it as
    // parent and a fold-1 row of its class as partner: every fold holds out one of the two,
    // so no fold may use them, and every figure must equal that of the file without them.
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    let mut text = String::from("label,fold,f0,f1,f2\n");
    for (c, n) in [30usize, 6, 12].into_iter().enumerate() {
        for i in 0..n {
            let f: Vec<String> = (0..3)
                .map(|j| {
                    let centre = if j == c { 2.0 } else { 0.0 };
                    (centre + value(c * 100 + i, j, 4)).to_string()
                })
                .collect();
            text += &format!("c{c},{},{}\n", i % 2, f.join(","));
        }
    }
    std::fs::write(&input, text).unwrap();
    let grown = p(dir.path(), "g.csv");
    grow(&input, &grown);
    let text = std::fs::read_to_string(&grown).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    let header: Vec<&str> = lines[0].split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    let rows: Vec<Vec<&str>> = lines[1..].iter().map(|l| l.split(',').collect()).collect();
    let real: Vec<usize> = (0..rows.len())
        .filter(|&i| rows[i][col("origin")] == "real")
        .collect();
    let mut planted = text.clone();
    let mut count = 0;
    for &r in real.iter().filter(|&&r| rows[r][col("fold")] == "0") {
        let same = |q: &usize| rows[*q][col("label")] == rows[r][col("label")];
        let Some(&q) = real
            .iter()
            .find(|&&q| rows[q][col("fold")] == "1" && same(&q))
        else {
            continue;
        };
        let mut f = rows[r].clone();
        let (r_s, q_s) = (r.to_string(), q.to_string());
        f[col("fold")] = "-1";
        f[col("origin")] = "interpolate";
        f[col("parent")] = &r_s;
        f[col("partner")] = &q_s;
        f[col("weight")] = "0";
        planted += &(f.join(",") + "\n");
        count += 1;
    }
    assert!(count > 20);
    let dirty = p(dir.path(), "planted.csv");
    std::fs::write(&dirty, planted).unwrap();
    let assess = |f: &Path| {
        let o = assess_file(
            f,
            &[
                "--methods",
                "none,interpolate",
                "--probes",
                "knn,linear",
                "--json",
            ],
        );
        assert!(o.status.success(), "{}", stderr(&o));
        let v: Value = serde_json::from_str(&stdout(&o)).unwrap();
        let keep = ["methods", "summary", "per_class", "folds", "diagnostics"];
        keep.map(|k| v[k].clone())
    };
    let clean = assess(&grown);
    assert!(clean[0].to_string().contains(FROM_FILE));
    assert_eq!(clean, assess(&dirty));
}
