//! `calibrated` (Yang, Liu & Xu 2021) and `--path sphere` through the binary: grow, assess and
//! sweep run end to end; parameter errors name their flags.

use crate::common;

use common::*;

#[test]
fn grow_with_calibrated_grows_a_one_row_class() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[20, 15, 1], 4, 2);
    let out = p(dir.path(), "out.csv");
    let (f, o) = (input.to_str().unwrap(), out.to_str().unwrap());
    let r = embloom(
        &["grow", f, "-o", o, "--method", "calibrated", "--quiet"],
        &[],
    );
    assert!(r.status.success(), "{}", stderr(&r));
    let text = std::fs::read_to_string(&out).unwrap();
    // Median target 15: the one-row class c2 gets 14 rows.
    let grown: Vec<&str> = text
        .lines()
        .filter(|l| l.contains(",calibrated,"))
        .collect();
    assert_eq!(grown.len(), 14, "{text}");
    assert!(grown.iter().all(|l| l.split(',').any(|v| v == "c2")));
    // Tukey's transform refuses the negative features of this file, by its flag.
    let r = embloom(
        &[
            "grow",
            f,
            "-o",
            o,
            "--method",
            "calibrated",
            "--tukey",
            "0.5",
            "--force",
        ],
        &[],
    );
    assert!(!r.status.success());
    assert!(stderr(&r).contains("invalid --tukey"), "{}", stderr(&r));
    let r = embloom(
        &[
            "grow",
            f,
            "-o",
            o,
            "--method",
            "calibrated",
            "--borrowed-classes",
            "0",
            "--force",
        ],
        &[],
    );
    assert!(
        stderr(&r).contains("invalid --borrowed-classes"),
        "{}",
        stderr(&r)
    );
}

#[test]
fn assess_and_sweep_run_calibrated() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[40, 30, 6, 8], 5, 4);
    let f = input.to_str().unwrap();
    let common = ["--folds", "3", "--seed", "1", "--json", "--quiet"];
    let mut args = vec![
        "assess",
        f,
        "--methods",
        "calibrated,interpolate",
        "--no-diagnostics",
    ];
    args.extend(common);
    let v = run_json(&args);
    assert_finite_summary(&v, "calibrated");
    let augment = &v["config"]["augment"];
    assert_eq!(augment["borrowed_classes"], 2, "{augment}");
    assert!(augment["tukey"].is_null());
    for (knob, values) in [("borrowed-classes", "1,2"), ("magnitude", "0.05,0.21")] {
        let mut args = vec![
            "sweep",
            f,
            "--method",
            "calibrated",
            "--knob",
            knob,
            "--values",
            values,
        ];
        args.extend(common);
        let s = run_json(&args);
        assert!(s["points"].as_array().unwrap().len() >= 2, "{knob}");
    }
    // A knob calibrated does not read is refused.
    let mut args = vec![
        "sweep",
        f,
        "--method",
        "calibrated",
        "--knob",
        "neighbours",
        "--values",
        "1,2",
    ];
    args.extend(common);
    assert!(!embloom(&args, &[]).status.success());
}

#[test]
fn the_sphere_path_refuses_rows_off_the_sphere_by_its_flag() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[20, 10], 4, 3);
    let out = p(dir.path(), "out.csv");
    let (f, o) = (input.to_str().unwrap(), out.to_str().unwrap());
    let r = embloom(
        &[
            "grow",
            f,
            "-o",
            o,
            "--method",
            "interpolate",
            "--path",
            "sphere",
        ],
        &[],
    );
    assert!(!r.status.success());
    let e = stderr(&r);
    assert!(
        e.contains("invalid --path") && e.contains("--unit-norm"),
        "{e}"
    );
    let r = embloom(
        &[
            "grow",
            f,
            "-o",
            o,
            "--method",
            "interpolate",
            "--path",
            "sphere",
            "--unit-norm",
            "on",
            "--quiet",
        ],
        &[],
    );
    assert!(r.status.success(), "{}", stderr(&r));
}
