//! `reweight` and `logit-adjust` in a real assessment: they add no rows, run in the same
//! paired folds as `none`, and logit-adjust leaves its k-NN cells empty.

use crate::common::value;
use embloom::Dataset;
use embloom::assess::{AssessConfig, InputInfo, assess};
use embloom::augment::{AugmentParams, MethodKind, Target, UnitNorm};
use embloom::eval::{IntervalKind, Metric};
use embloom::probe::{KnnParams, LinearParams, ProbeKind};
use ndarray::Array2;

/// Classes of 60, 20 and 6 rows in 4 dims, means 1.2 apart against noise in [-1, 1).
fn data() -> Dataset {
    let sizes = [60usize, 20, 6];
    let n: usize = sizes.iter().sum();
    let mut x = Array2::<f32>::zeros((n, 4));
    let mut labels = Vec::new();
    let mut i = 0;
    for (c, &s) in sizes.iter().enumerate() {
        for _ in 0..s {
            for j in 0..4 {
                x[[i, j]] = if j == c { 1.2 } else { 0.0 } + value(i, j, 3);
            }
            labels.push(c as u32);
            i += 1;
        }
    }
    Dataset::new(x, labels, vec!["a".into(), "b".into(), "c".into()])
}

#[test]
fn probe_side_methods_add_no_rows_and_logit_adjust_skips_knn() {
    // Definitions: neither method makes rows (train_synthetic = 0); logit-adjust has no k-NN
    // form, so no fold record and summary rows with applies = false and no figures.
    let ds = data();
    let cfg = AssessConfig {
        methods: vec![
            MethodKind::None,
            MethodKind::Reweight,
            MethodKind::LogitAdjust,
        ],
        probes: vec![ProbeKind::Knn, ProbeKind::Linear],
        folds: 3,
        repeats: 1,
        target: Target::Median,
        classes: None,
        augment: AugmentParams::default(),
        unit_norm: UnitNorm::Off,
        knn: KnnParams {
            k: 5,
            ..KnnParams::default()
        },
        linear: LinearParams::default(),
        interval: IntervalKind::CorrectedT,
        seed: 1,
        diagnostics: false,
    }
    .validated()
    .unwrap();
    let info = InputInfo::in_memory("probe-side", &ds);
    let r = assess(&ds, &cfg, info).unwrap();
    assert!(r.folds.iter().all(|f| f.train_synthetic == 0));
    assert!(
        !r.folds
            .iter()
            .any(|f| f.method == "logit-adjust" && f.probe == ProbeKind::Knn)
    );
    for probe in [ProbeKind::Knn, ProbeKind::Linear] {
        assert_eq!(
            r.folds
                .iter()
                .filter(|f| f.method == "reweight" && f.probe == probe)
                .count(),
            3
        );
    }
    let cell = |m: &str, p: ProbeKind| {
        r.summary
            .iter()
            .find(|s| s.method == m && s.probe == p && s.metric == Metric::BalancedAccuracy)
            .unwrap()
    };
    let empty = cell("logit-adjust", ProbeKind::Knn);
    assert!(!empty.applies && empty.mean.is_nan() && empty.folds == 0);
    let json = serde_json::to_value(empty).unwrap();
    assert!(
        json["mean"].is_null() && json["delta_mean"].is_null(),
        "{json}"
    );
    assert!(cell("logit-adjust", ProbeKind::Linear).applies);
    assert!(cell("logit-adjust", ProbeKind::Linear).mean.is_finite());
    assert!(cell("reweight", ProbeKind::Knn).mean.is_finite());
    let table = embloom::report::terminal_table(&r);
    let row = table
        .lines()
        .find(|l| l.starts_with("knn") && l.contains("logit-adjust"))
        .unwrap();
    assert!(row.contains('—'), "{row}");
    assert!(r.warnings.iter().any(|w| w.contains("does not apply")));
}
