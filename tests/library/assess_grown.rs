//! Which classes an assessment marks as grown: only those that received synthetic rows in at
//! least one fold, not those the plan asked rows for.

use embloom::Dataset;
use embloom::assess::{AssessConfig, InputInfo, assess};
use embloom::augment::{AugmentParams, MethodKind, Target, UnitNorm};
use embloom::eval::IntervalKind;
use embloom::neighbors::Metric;
use embloom::probe::{KnnParams, LinearParams, ProbeKind};
use ndarray::Array2;

/// Two classes of 12 rows and one of a single row (invented data): interpolate needs a
/// same-class neighbour, so the single-row class can never get a synthetic row.
fn with_single_row_class() -> Dataset {
    let sizes = [12usize, 12, 1];
    let n: usize = sizes.iter().sum();
    let mut x = Array2::<f32>::zeros((n, 3));
    let mut labels = Vec::new();
    let mut i = 0;
    for (c, &s) in sizes.iter().enumerate() {
        for r in 0..s {
            for j in 0..3 {
                x[[i, j]] = if j == c { 10.0 } else { 0.0 } + ((r * 5 + j * 3) % 7) as f32 / 7.0;
            }
            labels.push(c as u32);
            i += 1;
        }
    }
    Dataset::new(x, labels, vec!["a".into(), "b".into(), "lone".into()])
}

/// k-NN (k = 3) on 3 folds, interpolate grown to the largest class.
fn three_fold_config() -> AssessConfig {
    AssessConfig {
        methods: vec![MethodKind::None, MethodKind::Interpolate],
        probes: vec![ProbeKind::Knn],
        folds: 3,
        repeats: 1,
        target: Target::Largest,
        classes: None,
        augment: AugmentParams::default(),
        unit_norm: UnitNorm::Off,
        knn: KnnParams {
            k: 3,
            metric: Metric::Euclidean,
            ..KnnParams::default()
        },
        linear: LinearParams::default(),
        interval: IntervalKind::default(),
        seed: 1,
        diagnostics: false,
    }
}

#[test]
fn a_class_that_got_no_rows_is_not_marked_grown() {
    let ds = with_single_row_class();
    let cfg = three_fold_config();
    let info = InputInfo::in_memory("single", &ds);
    let r = assess(&ds, &cfg, info).unwrap();
    assert!(
        !r.grown_classes.contains(&"lone".to_string()),
        "{:?}",
        r.grown_classes
    );
    for row in r.per_class.iter().filter(|c| c.class == "lone") {
        assert!(!row.grown, "{row:?}");
    }
}

#[test]
fn the_library_warns_of_a_thin_class_and_refuses_most_thin_classes_itself() {
    // One of three classes (the 1-row class) has fewer rows than the 3 folds: a warning in
    // the results (counted by hand).
    let ds = with_single_row_class();
    let r = assess(
        &ds,
        &three_fold_config(),
        InputInfo::in_memory("single", &ds),
    )
    .unwrap();
    assert!(
        r.warnings
            .iter()
            .any(|w| w.starts_with("1 of 3 classes have fewer rows than the 3 folds (lone)")),
        "{:?}",
        r.warnings
    );
    // Sizes 1, 1, 12: two of three classes thin at 3 folds and at 2: refused before any
    // work, with no flag spelling in the library's text (counted by hand).
    let mut x = Array2::<f32>::zeros((14, 2));
    for i in 0..14 {
        x[[i, 0]] = i as f32;
    }
    let mut labels = vec![0u32, 1];
    labels.extend(std::iter::repeat_n(2u32, 12));
    let thin = Dataset::new(x, labels, vec!["a".into(), "b".into(), "c".into()]);
    let err = assess(
        &thin,
        &three_fold_config(),
        InputInfo::in_memory("thin", &thin),
    )
    .unwrap_err();
    assert!(matches!(err, embloom::Error::Data { .. }), "{err:?}");
    let text = err.to_string();
    assert!(
        text.starts_with("thin: 2 of 3 classes have fewer rows than the 3 folds (a, b)"),
        "{text}"
    );
    assert!(
        text.contains("even `folds`=2 leaves most of them"),
        "{text}"
    );
    assert!(!text.contains("--"), "{text}");
}
