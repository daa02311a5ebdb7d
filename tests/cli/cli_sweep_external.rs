//! `sweep --external NAME=FILE`: an input-space set, or a union with a method, swept like a
//! method; each point is the assessment at that value, and rows copying held-out rows never
//! reach a probe.

use std::path::Path;

use crate::common;

use common::*;
use serde_json::Value;

/// An external set as CSV: `copies` rows per real row of a `write_csv` file, each naming its
/// real row as parent; copy k adds `jitter · (k + j)` to feature j (0 makes exact copies).
fn write_set(real: &Path, path: &Path, copies: usize, jitter: f32) {
    let text = std::fs::read_to_string(real).unwrap();
    let mut lines = text.lines();
    let mut out = format!("{},parent\n", lines.next().unwrap());
    for (row, line) in lines.enumerate() {
        let mut fields = line.split(',');
        let label = fields.next().unwrap();
        let values: Vec<f32> = fields.map(|v| v.parse().unwrap()).collect();
        for k in 0..copies {
            let moved: Vec<String> = values
                .iter()
                .enumerate()
                .map(|(j, v)| format!("{}", v + jitter * (k + j) as f32))
                .collect();
            out += &format!("{label},{},{row}\n", moved.join(","));
        }
    }
    std::fs::write(path, out).unwrap();
}

fn json_of(args: &[&str]) -> Value {
    let o = embloom(args, &[]);
    assert!(o.status.success(), "{}", stderr(&o));
    serde_json::from_str(&stdout(&o)).unwrap()
}

fn point<'a>(sweep: &'a Value, value: &str, metric: &str) -> &'a Value {
    sweep["points"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| {
            p["metric"] == metric
                && (p["value"] == value || value.parse::<f64>().is_ok_and(|v| p["value"] == v))
        })
        .unwrap_or_else(|| panic!("no point {value} {metric} in {sweep}"))
}

const PROTOCOL: [&str; 8] = [
    "--probes", "knn", "--folds", "4", "--seed", "3", "--json", "--quiet",
];

#[test]
fn an_external_set_and_a_union_sweep_as_assess_at_each_value() {
    let dir = tempdir();
    let (real, ext) = (p(dir.path(), "real.csv"), p(dir.path(), "jitter.csv"));
    write_csv(&real, &[40, 8, 10], 6, 9);
    write_set(&real, &ext, 4, 0.01);
    let (f, spec) = (real.to_str().unwrap(), format!("jitter={}", ext.display()));
    // The target moves an external set under `match`; magnitude moves the union's
    // extrapolate part.
    for (method, knob, values) in [
        ("jitter", "target", ["median", "largest"]),
        ("jitter+extrapolate", "magnitude", ["0.25", "1.5"]),
    ] {
        let joined = values.join(",");
        let mut args = vec![
            "sweep",
            f,
            "--external",
            &spec,
            "--method",
            method,
            "--knob",
            knob,
            "--values",
            &joined,
        ];
        args.extend(PROTOCOL);
        let sweep = json_of(&args);
        assert_eq!(sweep["method"], method);
        assert_eq!(sweep["external"]["sets"][0]["name"], "jitter");
        assert_eq!(sweep["external"]["budget"], "match");
        for value in values {
            let flag = format!("--{knob}");
            let methods = format!("none,{method}");
            let mut args = vec![
                "assess",
                f,
                "--external",
                &spec,
                "--methods",
                &methods,
                &flag,
                value,
                "--no-diagnostics",
            ];
            args.extend(PROTOCOL);
            let assess = json_of(&args);
            let row = assess["summary"]
                .as_array()
                .unwrap()
                .iter()
                .find(|r| r["method"] == method && r["metric"] == "balanced_accuracy")
                .unwrap();
            let pt = point(&sweep, value, "balanced_accuracy");
            for key in ["mean", "delta_mean", "delta_ci_low", "delta_ci_high"] {
                assert_eq!(pt[key], row[key], "{method}: {key} at {knob} {value}");
            }
        }
    }
}

#[test]
fn planted_copies_of_held_out_rows_never_reach_the_probe() {
    let dir = tempdir();
    let (real, planted) = (p(dir.path(), "real.csv"), p(dir.path(), "planted.csv"));
    write_csv(&real, &[40, 8, 10], 6, 9);
    // An exact copy of every real row, named as its parent: in each fold the copies of the
    // test rows are planted where a leak would put them.
    write_set(&real, &planted, 1, 0.0);
    let spec = format!("planted={}", planted.display());
    let mut args = vec![
        "sweep",
        real.to_str().unwrap(),
        "--external",
        &spec,
        "--method",
        "planted",
        "--knob",
        "target",
        "--values",
        "median,largest",
        "--knn-k",
        "1",
        "--knn-metric",
        "euclidean",
    ];
    args.extend(PROTOCOL);
    let sweep = json_of(&args);
    // Source: the 1-nearest-neighbour rule. A copy of a training row lies at the distance of
    // the row itself, with its label, so gated copies change no prediction: every difference
    // is exactly 0. A leaked copy of a test row would be that row's nearest neighbour, at
    // distance 0, and predict it right.
    let none = point(&sweep, "none", "balanced_accuracy")["mean"]
        .as_f64()
        .unwrap();
    assert!(
        none < 1.0,
        "the data must leave 1-NN errors to hide: {none}"
    );
    for value in ["median", "largest"] {
        for metric in ["balanced_accuracy", "macro_f1"] {
            let pt = point(&sweep, value, metric);
            assert_eq!(pt["delta_mean"], 0.0, "{metric} at {value}: {pt}");
        }
    }
}

#[test]
fn a_knob_that_moves_no_external_row_is_refused() {
    let dir = tempdir();
    let (real, ext) = (p(dir.path(), "real.csv"), p(dir.path(), "jitter.csv"));
    write_csv(&real, &[40, 8, 10], 6, 9);
    write_set(&real, &ext, 2, 0.01);
    let spec = format!("jitter={}", ext.display());
    let run = |extra: &[&str]| {
        let mut args = vec!["sweep", real.to_str().unwrap(), "--external", &spec];
        args.extend_from_slice(extra);
        embloom(&args, &[])
    };
    // An external set's rows were made before the split: magnitude changes none of them.
    let o = run(&[
        "--method",
        "jitter",
        "--knob",
        "magnitude",
        "--values",
        "1,2",
    ]);
    assert!(!o.status.success());
    assert!(stderr(&o).contains("target"), "{}", stderr(&o));
    // Under `all` not even the target changes which rows are used.
    let o = run(&[
        "--method",
        "jitter",
        "--knob",
        "target",
        "--values",
        "median",
        "--external-budget",
        "all",
    ]);
    assert!(!o.status.success());
    assert!(stderr(&o).contains("no knobs"), "{}", stderr(&o));
    // A name that is neither a method nor a given set.
    let o = run(&[
        "--method", "flips", "--knob", "target", "--values", "median",
    ]);
    assert!(!o.status.success());
}
