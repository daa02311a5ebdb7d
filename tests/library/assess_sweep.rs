//! A sweep runs `none` and makes the folds once for all values; every point must still be
//! exactly the assessment of that value against `none` (same bits), for every probe and for
//! knobs that change the grown classes (target) or only the rows (magnitude).

use crate::common::value;
use embloom::Dataset;
use embloom::assess::{AssessConfig, InputInfo, Knob, SweepValue, assess, sweep};
use embloom::augment::{AugmentParams, MethodKind, Target, UnitNorm};
use embloom::eval::{IntervalKind, Metric};
use embloom::probe::{KnnParams, LinearParams, ProbeKind};
use ndarray::Array2;

/// Four overlapping classes of 50, 30, 12 and 6 rows in 6 dims (class means 1.5 apart
/// against noise in [-1, 1)), so probes make mistakes and the differences vary.
fn data() -> Dataset {
    let sizes = [50usize, 30, 12, 6];
    let n: usize = sizes.iter().sum();
    let mut x = Array2::<f32>::zeros((n, 6));
    let mut labels = Vec::new();
    let mut i = 0;
    for (c, &s) in sizes.iter().enumerate() {
        for _ in 0..s {
            for j in 0..6 {
                x[[i, j]] = if j % 4 == c { 1.5 } else { 0.0 } + value(i, j, 11);
            }
            labels.push(c as u32);
            i += 1;
        }
    }
    let classes = (0..sizes.len()).map(|c| format!("c{c}")).collect();
    Dataset::new(x, labels, classes)
}

fn config(method: MethodKind) -> AssessConfig {
    AssessConfig {
        methods: vec![MethodKind::None, method],
        probes: ProbeKind::ALL.to_vec(),
        folds: 3,
        repeats: 2,
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
        seed: 5,
        diagnostics: false,
    }
}

fn info(ds: &Dataset) -> InputInfo {
    InputInfo::in_memory("overlapping", ds)
}

/// The same f64 bit for bit (NaN equal to NaN: a missing interval is missing in both).
fn same(a: f64, b: f64) -> bool {
    a.to_bits() == b.to_bits() || (a.is_nan() && b.is_nan())
}

#[test]
fn sweep_points_are_the_assessments_bit_for_bit() {
    // Common practice, no source: sharing the baseline must not change a single figure.
    let ds = data();
    for (method, knob, values) in [
        (
            MethodKind::Extrapolate,
            Knob::Magnitude,
            vec!["0.25", "1.5"],
        ),
        (
            MethodKind::Interpolate,
            Knob::Target,
            vec!["largest", "x2", "20"],
        ),
    ] {
        let base = config(method);
        let values: Vec<String> = values.into_iter().map(String::from).collect();
        let swept = sweep(&ds, &base, method, knob, &values, info(&ds), |_, _| {}).unwrap();
        for (i, v) in values.iter().enumerate() {
            let cfg = knob.apply(&base, v).unwrap().validated().unwrap();
            let r = assess(&ds, &cfg, info(&ds)).unwrap();
            for probe in ProbeKind::ALL {
                for metric in Metric::HEADLINE {
                    let find = |m: MethodKind| {
                        r.summary
                            .iter()
                            .find(|s| s.method == m && s.probe == probe && s.metric == metric)
                            .unwrap()
                    };
                    let row = find(method);
                    let point = swept
                        .points
                        .iter()
                        .find(|p| {
                            p.value == SweepValue::Given(v.clone())
                                && p.probe == probe
                                && p.metric == metric
                        })
                        .unwrap();
                    let at = format!("{method} {knob}={v} {probe} {metric}");
                    assert!(same(point.mean, row.mean), "{at}");
                    assert!(same(point.delta_mean, row.delta_mean), "{at}");
                    assert!(same(point.delta_ci_low, row.delta_ci_low), "{at}");
                    assert!(same(point.delta_ci_high, row.delta_ci_high), "{at}");
                    assert!(same(point.p_value, row.p_value), "{at}");
                    if i == 0 {
                        let base_row = find(MethodKind::None);
                        let base_point = swept
                            .points
                            .iter()
                            .find(|p| {
                                p.value == SweepValue::Baseline
                                    && p.probe == probe
                                    && p.metric == metric
                            })
                            .unwrap();
                        assert!(same(base_point.mean, base_row.mean), "none at {at}");
                    }
                }
            }
        }
    }
}
