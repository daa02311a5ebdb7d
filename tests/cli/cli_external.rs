//! `assess --external NAME=FILE`: embeddings of input-space augmented samples as a method of
//! their own, in every output, and refused with the row named when a row does not fit.

use std::path::Path;

use crate::common;

use common::*;
use serde_json::Value;

/// An external set as CSV: four jittered copies of every row of the real file written by
/// `write_csv(real, &[30, 8, 8], 4, 3)` (property-test input, not a figure), each naming its
/// parent by row index; `parent_shift` moves every parent (to plant a bad one).
fn write_external(real: &Path, path: &Path, parent_shift: usize) {
    let text = std::fs::read_to_string(real).unwrap();
    let mut lines = text.lines();
    let header = lines.next().unwrap();
    let mut out = format!("{header},parent\n");
    for (row, line) in lines.enumerate() {
        let mut fields = line.split(',');
        let label = fields.next().unwrap();
        let values: Vec<f32> = fields.map(|v| v.parse().unwrap()).collect();
        for k in 0..4 {
            let jittered: Vec<String> = values
                .iter()
                .enumerate()
                .map(|(j, v)| format!("{}", v + 0.01 * (k + j) as f32))
                .collect();
            out += &format!("{label},{},{}\n", jittered.join(","), row + parent_shift);
        }
    }
    std::fs::write(path, out).unwrap();
}

fn assess(real: &Path, external: &Path, extra: &[&str]) -> std::process::Output {
    let spec = format!("jitter={}", external.display());
    let mut args = vec![
        "assess",
        real.to_str().unwrap(),
        "--external",
        &spec,
        "--probes",
        "knn",
        "--folds",
        "4",
        "--no-diagnostics",
        "--target",
        "largest",
    ];
    args.extend_from_slice(extra);
    embloom(&args, &[])
}

#[test]
fn an_external_set_and_a_union_are_methods_in_the_json() {
    let dir = tempdir();
    let (real, ext) = (p(dir.path(), "real.csv"), p(dir.path(), "jitter.csv"));
    write_csv(&real, &[30, 8, 8], 4, 3);
    write_external(&real, &ext, 0);
    let o = assess(
        &real,
        &ext,
        &["--methods", "none,interpolate,jitter+interpolate", "--json"],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let v: Value = serde_json::from_str(&stdout(&o)).unwrap();
    let methods: Vec<&str> = v["methods"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m.as_str().unwrap())
        .collect();
    assert_eq!(
        methods,
        ["none", "interpolate", "jitter", "jitter+interpolate"]
    );
    assert_eq!(v["config"]["external"]["budget"], "match");
    assert_eq!(v["config"]["external"]["sets"][0]["rows"], 184);
    // Under `match` the set adds what interpolate adds, fold by fold (both have enough rows).
    let folds = v["folds"].as_array().unwrap();
    let rows = |m: &str, f: u64| {
        folds
            .iter()
            .find(|r| r["method"] == m && r["fold"] == f)
            .unwrap()["train_synthetic"]
            .as_u64()
            .unwrap()
    };
    for f in 0..4 {
        assert!(rows("interpolate", f) > 0);
        assert_eq!(rows("jitter", f), rows("interpolate", f));
        assert_eq!(rows("jitter+interpolate", f), 2 * rows("interpolate", f));
    }
}

#[test]
fn a_parent_that_is_no_real_row_is_refused_with_its_row() {
    let dir = tempdir();
    let (real, ext) = (p(dir.path(), "real.csv"), p(dir.path(), "jitter.csv"));
    write_csv(&real, &[30, 8, 8], 4, 3);
    write_external(&real, &ext, 40);
    let o = assess(&real, &ext, &[]);
    assert!(!o.status.success());
    let err = stderr(&o);
    // Real rows 6.. shifted by 40 pass the last real row (45): the first is set row 24.
    assert!(
        err.contains("row 24") && err.contains("parent '46'"),
        "{err}"
    );
    let o = assess(&real, &ext, &["--external-budget", "some"]);
    assert!(stderr(&o).contains("--external-budget"), "{}", stderr(&o));
}
