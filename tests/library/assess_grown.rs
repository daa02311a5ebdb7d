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

#[test]
fn a_class_that_got_no_rows_is_not_marked_grown() {
    let ds = with_single_row_class();
    let cfg = AssessConfig {
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
    };
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
