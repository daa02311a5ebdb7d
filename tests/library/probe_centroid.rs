//! The nearest-centroid probe against scikit-learn's NearestCentroid (euclidean) and a numpy
//! transcription of its cosine rule, from tests/reference/probe_centroid.py; and the probe in
//! a real assessment, where reweight and logit-adjust leave its cells empty.

use std::path::Path;

use embloom::Dataset;
use embloom::assess::{AssessConfig, InputInfo, assess};
use embloom::augment::{AugmentParams, MethodKind, Target, UnitNorm};
use embloom::eval::{IntervalKind, Metric as EvalMetric};
use embloom::neighbors::Metric;
use embloom::probe::{CentroidProbe, KnnParams, LinearParams, ProbeKind};
use ndarray::Array2;

fn fixture() -> serde_json::Value {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/probe/centroid.json");
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

fn indices(v: &serde_json::Value) -> Vec<usize> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|i| i.as_u64().unwrap() as usize)
        .collect()
}

#[test]
fn centroid_probe_matches_scikit_learn_and_the_cosine_transcription() {
    // Reference: tests/reference/probe_centroid.py (scikit-learn NearestCentroid for
    // euclidean, its numpy transcription for cosine) on the wine set as float32, test rows
    // those with index % 3 == 0, with a balanced and an imbalanced (40/10/4) training set.
    let fx = fixture();
    let rows: Vec<Vec<f32>> = fx["x"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| {
            r.as_array()
                .unwrap()
                .iter()
                .map(|v| v.as_f64().unwrap() as f32)
                .collect()
        })
        .collect();
    let (n, d) = (rows.len(), rows[0].len());
    let x = Array2::from_shape_vec((n, d), rows.into_iter().flatten().collect()).unwrap();
    let y: Vec<u32> = indices(&fx["y"]).into_iter().map(|c| c as u32).collect();
    let n_classes = fx["n_classes"].as_u64().unwrap() as usize;
    let test = x.select(ndarray::Axis(0), &indices(&fx["test"]));
    let mut compared = 0;
    for (set, expected) in fx["predictions"].as_object().unwrap() {
        let train = indices(&expected["train"]);
        let train_x = x.select(ndarray::Axis(0), &train);
        let train_y: Vec<u32> = train.iter().map(|&i| y[i]).collect();
        for (metric, name) in [(Metric::Euclidean, "euclidean"), (Metric::Cosine, "cosine")] {
            let want: Vec<u32> = indices(&expected[name])
                .into_iter()
                .map(|c| c as u32)
                .collect();
            // Split the training rows in two parts, as assess passes real then synthetic rows.
            let half = train_x.nrows() / 2;
            let (a, b) = train_x.view().split_at(ndarray::Axis(0), half);
            let got = CentroidProbe::new(metric)
                .predict(&[a, b], &train_y, n_classes, test.view())
                .unwrap();
            assert_eq!(got, want, "{set} {name}");
            compared += 1;
        }
    }
    assert_eq!(compared, 4);
}

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
                x[[i, j]] = if j == c { 1.2 } else { 0.0 } + crate::common::value(i, j, 3);
            }
            labels.push(c as u32);
            i += 1;
        }
    }
    Dataset::new(x, labels, vec!["a".into(), "b".into(), "c".into()])
}

#[test]
fn centroid_probe_runs_in_assess_and_skips_reweight_and_logit_adjust() {
    // Definitions: a class mean has no scores to shift (logit-adjust) and balanced weights
    // are constant within a class, so they leave every mean as it was (reweight): both
    // centroid cells are empty; a row-adding method has centroid figures in every fold.
    let ds = data();
    let cfg = AssessConfig {
        methods: vec![
            MethodKind::None,
            MethodKind::Interpolate,
            MethodKind::Reweight,
            MethodKind::LogitAdjust,
        ],
        probes: vec![ProbeKind::Knn, ProbeKind::Centroid],
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
    let r = assess(&ds, &cfg, InputInfo::in_memory("centroid", &ds)).unwrap();
    for m in ["none", "interpolate"] {
        let n = r
            .folds
            .iter()
            .filter(|f| f.method == m && f.probe == ProbeKind::Centroid)
            .count();
        assert_eq!(n, 3, "{m}");
    }
    let cell = |m: &str| {
        r.summary
            .iter()
            .find(|s| {
                s.method == m
                    && s.probe == ProbeKind::Centroid
                    && s.metric == EvalMetric::BalancedAccuracy
            })
            .unwrap()
    };
    assert!(cell("none").applies && cell("none").mean.is_finite());
    // Common practice, no source: means 1.2 apart against noise in [-1, 1) put the
    // prototypes well above the 1/3 of chance.
    assert!(cell("none").mean > 0.5, "{}", cell("none").mean);
    for m in ["reweight", "logit-adjust"] {
        assert!(!cell(m).applies && cell(m).mean.is_nan(), "{m}");
    }
    assert!(
        r.warnings
            .iter()
            .any(|w| w.contains("reweight does not apply to the centroid probe"))
    );
}
