//! The k-NN probe's feature standardisation: predictions against scikit-learn's StandardScaler
//! + KNeighborsClassifier on the wine data, and no leakage from the test rows.

use embloom::neighbors::{self, Metric};
use embloom::probe::{KnnParams, KnnProbe, KnnStandardizer, Vote};
use ndarray::{Array2, Axis, concatenate, s};
use serde_json::Value;

use crate::common::json_matrix as matrix;

const FIXTURE: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/tests/fixtures/probe/knn_standardize_wine.json"
);

fn labels(v: &Value) -> Vec<u32> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_u64().unwrap() as u32)
        .collect()
}

fn probe(k: usize, standardize: bool) -> KnnProbe {
    KnnProbe::new(KnnParams {
        k,
        metric: Metric::Euclidean,
        vote: Vote::Uniform,
        standardize,
        ..KnnParams::default()
    })
    .unwrap()
}

fn fixture() -> (Value, Array2<f32>, Vec<u32>, Array2<f32>) {
    let v: Value = serde_json::from_str(&std::fs::read_to_string(FIXTURE).unwrap()).unwrap();
    let (xtr, ytr, xte) = (
        matrix(&v["train_x"]),
        labels(&v["train_y"]),
        matrix(&v["test_x"]),
    );
    (v, xtr, ytr, xte)
}

#[test]
fn standardized_knn_matches_scikit_learn_on_wine() {
    // Reference: tests/reference/probe_knn_standardize.py (StandardScaler fitted on the
    // training rows + KNeighborsClassifier, k = 5, euclidean, uniform).
    let (v, xtr, ytr, xte) = fixture();
    let k = v["k"].as_u64().unwrap() as usize;
    let fitted = KnnStandardizer::fit(xtr.view());
    for (name, got, want) in [
        ("mean", fitted.mean(), &v["mean"]),
        ("scale", fitted.scale(), &v["scale"]),
    ] {
        for (j, (g, w)) in got.iter().zip(want.as_array().unwrap()).enumerate() {
            let w = w.as_f64().unwrap();
            assert!(
                (g - w).abs() <= 1e-9 * w.abs().max(1.0),
                "{name}[{j}]: {g} vs {w}"
            );
        }
    }
    let on = probe(k, true).predict(xtr.view(), &ytr, 3, xte.view());
    assert_eq!(on, labels(&v["standardized_predictions"]));
    let off = probe(k, false).predict(xtr.view(), &ytr, 3, xte.view());
    assert_eq!(off, labels(&v["raw_predictions"]));
    // The fixture's script reports 16 of 60 predictions changing: the switch matters here.
    assert!(on.iter().zip(&off).filter(|(a, b)| a != b).count() > 0);
}

#[test]
fn test_rows_never_reach_the_training_statistics() {
    // From the definition (statistics of the training rows only): shifting and scaling the
    // test rows leaves the probe in the training rows' space, and planting an extreme test row
    // changes no other test row's prediction. A scaler fitted on training + test rows (the leak this
    // guards against) does change predictions, so the check can fail.
    let (_, xtr, ytr, xte) = fixture();
    let p = probe(5, true);
    let honest = p.standardizer(xtr.view()).unwrap();
    let before = p.predict(xtr.view(), &ytr, 3, xte.view());

    let moved = xte.mapv(|v| v * 1000.0 + 5.0e4);
    let extreme = Array2::from_elem((1, xte.ncols()), 1.0e7f32);
    let planted = concatenate![Axis(0), xte.view(), extreme.view()];
    for test in [&moved, &planted] {
        // What predict returns is the vote in the space of the training-only statistics.
        let knn = neighbors::knn(
            honest.apply(test.view()).view(),
            honest.apply(xtr.view()).view(),
            5,
            Metric::Euclidean,
        );
        assert_eq!(
            p.predict(xtr.view(), &ytr, 3, test.view()),
            p.predict_from_neighbours(&knn, &ytr, 3)
        );
    }
    let after = p.predict(xtr.view(), &ytr, 3, planted.view());
    assert_eq!(&after[..xte.nrows()], &before[..]);

    let leaky = KnnStandardizer::fit(concatenate![Axis(0), xtr.view(), planted.view()].view());
    let knn = neighbors::knn(
        leaky.apply(planted.slice(s![..xte.nrows(), ..])).view(),
        leaky.apply(xtr.view()).view(),
        5,
        Metric::Euclidean,
    );
    let leaked = p.predict_from_neighbours(&knn, &ytr, 3);
    assert_ne!(
        leaked, before,
        "a transductive scaler should move some prediction"
    );
}
