//! `embloom sweep`: each point is exactly the assessment of that setting against `none`.

use crate::common;

use common::*;
use serde_json::Value;

#[test]
fn each_point_equals_assess_at_that_value() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[40, 8, 10], 6, 9);
    let f = input.to_str().unwrap();
    let common = [
        "--probes", "knn", "--folds", "4", "--seed", "3", "--json", "--quiet",
    ];
    let mut args = vec![
        "sweep",
        f,
        "--method",
        "extrapolate",
        "--knob",
        "magnitude",
        "--values",
        "0.25,1.5",
    ];
    args.extend(common);
    let o = embloom(&args, &[]);
    assert!(o.status.success(), "{}", stderr(&o));
    let sweep: Value = serde_json::from_str(&stdout(&o)).unwrap();
    for value in ["0.25", "1.5"] {
        let mut args = vec![
            "assess",
            f,
            "--methods",
            "extrapolate",
            "--magnitude",
            value,
            "--no-diagnostics",
        ];
        args.extend(common);
        let o = embloom(&args, &[]);
        assert!(o.status.success(), "{}", stderr(&o));
        let assess: Value = serde_json::from_str(&stdout(&o)).unwrap();
        let row = assess["summary"]
            .as_array()
            .unwrap()
            .iter()
            .find(|r| r["method"] == "extrapolate" && r["metric"] == "balanced_accuracy")
            .unwrap();
        let point = sweep["points"]
            .as_array()
            .unwrap()
            .iter()
            .find(|p| {
                p["value"] == value.parse::<f64>().unwrap() && p["metric"] == "balanced_accuracy"
            })
            .unwrap();
        for key in ["mean", "delta_mean", "delta_ci_low", "delta_ci_high"] {
            assert_eq!(point[key], row[key], "{key} at magnitude {value}");
        }
    }
}

#[test]
fn bad_values_are_refused_before_any_work() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[20, 5], 3, 1);
    let csv = p(dir.path(), "points.csv");
    let o = embloom(
        &[
            "sweep",
            input.to_str().unwrap(),
            "--method",
            "interpolate",
            "--knob",
            "neighbours",
            "--values",
            "3,x",
            "--csv",
            csv.to_str().unwrap(),
        ],
        &[],
    );
    assert!(!o.status.success());
    assert!(
        stderr(&o).contains("'x'") && stderr(&o).contains("--knob neighbours"),
        "{}",
        stderr(&o)
    );
    assert!(!csv.exists());
}

#[test]
fn a_knob_the_method_does_not_use_is_refused() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[20, 5], 3, 1);
    let o = embloom(
        &[
            "sweep",
            input.to_str().unwrap(),
            "--method",
            "interpolate",
            "--knob",
            "variance-kept",
            "--values",
            "0.5,0.9",
            "--quiet",
        ],
        &[],
    );
    assert!(!o.status.success());
    let err = stderr(&o);
    assert!(
        err.contains("interpolate does not use variance-kept")
            && err.contains("neighbours, target"),
        "{err}"
    );
}

#[test]
fn the_baseline_is_a_row_and_values_are_numbers() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[30, 8], 4, 2);
    let f = input.to_str().unwrap();
    let args = [
        "sweep",
        f,
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
        "--quiet",
    ];
    let o = embloom(&[&args[..], &["--json"]].concat(), &[]);
    assert!(o.status.success(), "{}", stderr(&o));
    let sweep: Value = serde_json::from_str(&stdout(&o)).unwrap();
    let values: Vec<&Value> = sweep["points"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| &p["value"])
        .collect();
    assert!(values.contains(&&Value::from("none")), "{values:?}");
    assert!(values.contains(&&Value::from(2u64)), "{values:?}");
    assert!(!values.contains(&&Value::from("2")), "{values:?}");
    let o = embloom(&args, &[]);
    let table = stdout(&o);
    assert!(table.lines().any(|l| l.starts_with("none")), "{table}");
}

#[test]
fn a_warning_at_every_value_is_printed_once() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[30, 10], 4, 3);
    let o = embloom(
        &[
            "sweep",
            input.to_str().unwrap(),
            "--method",
            "interpolate",
            "--knob",
            "neighbours",
            "--values",
            "2,4",
            "--probes",
            "linear",
            "--folds",
            "3",
            "--linear-max-iter",
            "1",
            "--json",
            "--quiet",
        ],
        &[],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let v: Value = serde_json::from_str(&stdout(&o)).unwrap();
    let warnings: Vec<&str> = v["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .map(|w| w.as_str().unwrap())
        .collect();
    let baseline: Vec<_> = warnings
        .iter()
        .filter(|w| w.contains("did not converge for none "))
        .collect();
    assert_eq!(baseline.len(), 1, "{warnings:?}");
    assert!(
        baseline[0].ends_with("(at every neighbours)"),
        "{warnings:?}"
    );
}
