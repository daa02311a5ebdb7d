//! The assessment's statistics end to end: degenerate figures say "no interval" with the
//! number of folds that had a value, are never marked significant, and a warning names the
//! figures whose fold differences are mostly exactly zero.

use embloom::Dataset;
use embloom::assess::{AssessConfig, InputInfo, assess};
use embloom::augment::UnitNorm;
use embloom::augment::{AugmentParams, MethodKind, Target};
use embloom::eval::IntervalKind;
use embloom::neighbors::Metric;
use embloom::probe::{KnnParams, LinearParams, ProbeKind};
use ndarray::Array2;

/// Classes far apart (centres 100 units apart, rows within ±0.5), so every probe gets every
/// test row right with or without synthetic rows: every fold difference is exactly zero.
/// Sizes 60, 60, 30 and a single-row class (which lands in one test fold only).
fn separated() -> Dataset {
    let sizes = [60usize, 60, 30, 1];
    let n: usize = sizes.iter().sum();
    let mut x = Array2::<f32>::zeros((n, 4));
    let mut labels = Vec::new();
    let mut i = 0;
    for (c, &s) in sizes.iter().enumerate() {
        for r in 0..s {
            for j in 0..4 {
                let jitter = (((r * 7 + j * 13) % 11) as f32 / 11.0) - 0.5;
                x[[i, j]] = if j == c % 4 { 100.0 } else { 0.0 }
                    + if c == 3 { -100.0 } else { 0.0 }
                    + jitter;
            }
            labels.push(c as u32);
            i += 1;
        }
    }
    Dataset::new(x, labels, (0..4).map(|c| format!("c{c}")).collect())
}

fn config(interval: IntervalKind) -> AssessConfig {
    AssessConfig {
        methods: vec![MethodKind::None, MethodKind::Interpolate],
        probes: vec![ProbeKind::Knn],
        folds: 5,
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
        interval,
        seed: 3,
        diagnostics: false,
    }
}

fn info(ds: &Dataset) -> InputInfo {
    InputInfo::in_memory("separated", ds)
}

#[test]
fn zero_spread_prints_no_interval_and_warns() {
    // Common practice, no source: a difference that never varies has no estimable variance.
    let ds = separated();
    for kind in IntervalKind::ALL {
        let r = assess(&ds, &config(kind), info(&ds)).unwrap();
        let row = r
            .summary
            .iter()
            .find(|s| s.method == "interpolate" && s.metric == "balanced_accuracy")
            .unwrap();
        assert_eq!(row.delta_mean, 0.0, "{kind}");
        assert_eq!(row.folds, 5, "{kind}");
        assert_eq!(
            row.no_interval.as_deref(),
            Some("no interval (5 folds, no variation)"),
            "{kind}"
        );
        assert!(row.p_value.is_nan() && row.delta_ci_low.is_nan(), "{kind}");
        assert!(
            r.warnings
                .iter()
                .any(|w| w.contains("exactly zero") && w.contains("balanced accuracy")),
            "{kind}: {:?}",
            r.warnings
        );
        // One warning per method and probe, naming every figure it concerns.
        let zero_warnings = r
            .warnings
            .iter()
            .filter(|w| w.contains("exactly zero"))
            .count();
        assert!(
            zero_warnings <= config(kind).probes.len(),
            "{kind}: {:?}",
            r.warnings
        );
        // The single-row class has a recall in one fold only: folds counts that, not 5.
        let single = r
            .per_class
            .iter()
            .find(|c| c.method == "interpolate" && c.class == "c3")
            .unwrap();
        assert_eq!(single.folds, 1, "{kind}");
        assert_eq!(
            single.no_interval.as_deref(),
            Some("no interval (1 fold with a value)"),
            "{kind}"
        );
        // Nothing is reported as significant anywhere.
        for s in &r.summary {
            assert!(
                !(s.delta_ci_low > 0.0 || s.delta_ci_high < 0.0),
                "{kind}: {s:?}"
            );
            assert!(s.p_value.is_nan() || (s.p_value > 0.0 && s.p_value <= 1.0));
        }
        // results.json carries the reason and the folds with a value.
        let json = serde_json::to_value(&r).unwrap();
        let s = json["summary"]
            .as_array()
            .unwrap()
            .iter()
            .find(|s| s["method"] == "interpolate" && s["metric"] == "balanced_accuracy")
            .unwrap();
        assert_eq!(s["folds"], 5);
        assert_eq!(s["no_interval"], "no interval (5 folds, no variation)");
    }
}
