//! The rule for classes with fewer rows than folds: a warning when some are, a refusal before
//! any work (no report folder, the count and a fix) when most are. The class sizes below are
//! chosen so the counts can be checked by hand: a class is thin when its rows < folds.

use crate::common;

use common::*;

fn assess(input: &std::path::Path, report: &std::path::Path, folds: &str) -> std::process::Output {
    assess_file(
        input,
        &[
            "--probes",
            "knn",
            "--methods",
            "none,interpolate",
            "--folds",
            folds,
            "--report",
            report.to_str().unwrap(),
            "--quiet",
        ],
    )
}

#[test]
fn most_classes_thinner_than_the_folds_are_refused_before_any_work() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    let report = p(dir.path(), "report");
    // Sizes 1, 1, 1, 1, 20 at 5 folds: 4 of 5 classes thin; at 2 folds still 4 of 5 (counted by hand).
    write_csv(&input, &[1, 1, 1, 1, 20], 4, 3);
    let o = assess(&input, &report, "5");
    let err = stderr(&o);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("in.csv"), "{err}");
    assert!(
        err.contains("4 of 5 classes have fewer rows than the 5 folds (c0, c1, c2, c3)"),
        "{err}"
    );
    assert!(err.contains("refused before any work"), "{err}");
    assert!(err.contains("even --folds=2 leaves most of them"), "{err}");
    assert!(
        err.contains("merge or drop the classes with fewer than 5 rows"),
        "{err}"
    );
    assert!(!report.exists(), "no report folder after a refusal");
    assert!(stdout(&o).is_empty(), "{}", stdout(&o));
}

#[test]
fn the_refusal_names_a_fold_count_that_would_pass() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    let report = p(dir.path(), "report");
    // Sizes 2, 2, 2, 20, 20: thin at 5, 4 and 3 folds (3 of 5), none at 2 (counted by hand).
    write_csv(&input, &[2, 2, 2, 20, 20], 4, 4);
    let o = assess(&input, &report, "5");
    let err = stderr(&o);
    assert!(!o.status.success(), "{err}");
    assert!(
        err.contains("3 of 5 classes have fewer rows than the 5 folds"),
        "{err}"
    );
    assert!(err.contains("--folds=2 passes"), "{err}");
    assert!(!report.exists());
    // The suggested fold count does pass, with no thin-class warning at all.
    let o = assess(&input, &report, "2");
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(!stderr(&o).contains("fewer rows than"), "{}", stderr(&o));
    assert!(report.join("results.json").exists());
}

#[test]
fn some_thin_classes_are_a_warning_and_the_work_goes_on() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    let report = p(dir.path(), "report");
    // Sizes 20, 20, 20, 1, 1 at 5 folds: 2 of 5 thin, not most (counted by hand).
    write_csv(&input, &[20, 20, 20, 1, 1], 4, 5);
    let o = assess(&input, &report, "5");
    let err = stderr(&o);
    assert!(o.status.success(), "{err}");
    assert_eq!(
        err.matches("2 of 5 classes have fewer rows than the 5 folds (c3, c4)")
            .count(),
        1,
        "{err}"
    );
    let results: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(report.join("results.json")).unwrap())
            .unwrap();
    let warnings = results["warnings"].as_array().unwrap();
    assert!(
        warnings.iter().any(|w| w
            .as_str()
            .unwrap()
            .contains("2 of 5 classes have fewer rows")),
        "{warnings:?}"
    );
}

#[test]
fn exactly_half_thin_is_still_a_warning() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    let report = p(dir.path(), "report");
    // Sizes 1, 1, 12, 12 at 3 folds: 2 of 4 thin, half and not most (counted by hand).
    write_csv(&input, &[1, 1, 12, 12], 4, 6);
    let o = assess(&input, &report, "3");
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(stderr(&o).contains("2 of 4 classes have fewer rows than the 3 folds"));
}

#[test]
fn sweep_refuses_most_thin_classes_too() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[1, 1, 1, 1, 20], 4, 7);
    let o = embloom(
        &[
            "sweep",
            input.to_str().unwrap(),
            "--method",
            "interpolate",
            "--knob",
            "neighbours",
            "--values",
            "3,5",
            "--probes",
            "knn",
            "--quiet",
        ],
        &[],
    );
    let err = stderr(&o);
    assert!(!o.status.success(), "{err}");
    assert!(
        err.contains("4 of 5 classes have fewer rows than the 5 folds"),
        "{err}"
    );
    assert!(err.contains("refused before any work"), "{err}");
}
