//! Both probes against scikit-learn on its bundled digits set (1797 × 64, pixels / 16), over
//! the 5 stratified folds written by tests/reference/probe_digits.py.

use std::path::Path;

use embloom::neighbors::Metric;
use embloom::probe::{ClassWeight, KnnParams, KnnProbe, LinearParams, LinearProbe, Vote};
use ndarray::{Array2, Axis};

const FIXTURES: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fixtures/probe");

/// Labels, folds and rows of digits.csv (header `label,fold,f0..f63`), parsed by hand so the
/// test does not lean on the crate's readers.
struct Digits {
    labels: Vec<u32>,
    folds: Vec<usize>,
    x: Array2<f32>,
}

fn load_digits() -> Digits {
    let text = std::fs::read_to_string(Path::new(FIXTURES).join("digits.csv")).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    assert_eq!(&header[..3], &["label", "fold", "f0"]);
    let d = header.len() - 2;
    let (mut labels, mut folds, mut values) = (Vec::new(), Vec::new(), Vec::new());
    for line in lines.filter(|l| !l.is_empty()) {
        let fields: Vec<&str> = line.split(',').collect();
        assert_eq!(fields.len(), d + 2, "{line}");
        labels.push(fields[0].parse().unwrap());
        folds.push(fields[1].parse().unwrap());
        values.extend(fields[2..].iter().map(|v| v.parse::<f32>().unwrap()));
    }
    let x = Array2::from_shape_vec((labels.len(), d), values).unwrap();
    Digits { labels, folds, x }
}

fn expected() -> serde_json::Value {
    let text = std::fs::read_to_string(Path::new(FIXTURES).join("digits_expected.json")).unwrap();
    serde_json::from_str(&text).unwrap()
}

/// Train and test rows of one fold: (train x, train y, test x, test y).
fn split(data: &Digits, fold: usize) -> (Array2<f32>, Vec<u32>, Array2<f32>, Vec<u32>) {
    let pick = |test: bool| -> Vec<usize> {
        (0..data.labels.len())
            .filter(|&i| (data.folds[i] == fold) == test)
            .collect()
    };
    let (tr, te) = (pick(false), pick(true));
    let labels = |rows: &[usize]| rows.iter().map(|&i| data.labels[i]).collect::<Vec<u32>>();
    (
        data.x.select(Axis(0), &tr),
        labels(&tr),
        data.x.select(Axis(0), &te),
        labels(&te),
    )
}

fn as_u32s(v: &serde_json::Value) -> Vec<u32> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|p| p.as_u64().unwrap() as u32)
        .collect()
}

#[test]
fn fixture_is_the_bundled_digits_set() {
    // scikit-learn load_digits: 1797 rows, 64 pixels, 10 classes; 5 folds of 359-360 rows.
    let data = load_digits();
    assert_eq!(data.x.dim(), (1797, 64));
    assert_eq!(data.labels.iter().max(), Some(&9));
    for f in 0..5 {
        let n = data.folds.iter().filter(|&&g| g == f).count();
        assert!((359..=360).contains(&n), "fold {f}: {n}");
    }
}

#[test]
fn knn_predictions_match_scikit_learn_in_every_fold() {
    // scikit-learn KNeighborsClassifier(algorithm="brute") predictions, written by
    // tests/reference/probe_digits.py; digit labels 0..9 are their own (sorted) class indices,
    // so both argmax tie rules coincide. Euclidean rows with equidistant k-th neighbours were
    // checked by the script to give the same prediction under lower-index tie order.
    let data = load_digits();
    let exp = expected();
    let t = exp["temperature"].as_f64().unwrap() as f32;
    let settings = [
        ("cosine_uniform_k10", 10, Metric::Cosine, Vote::Uniform),
        ("cosine_weighted_k10", 10, Metric::Cosine, Vote::Weighted),
        ("euclidean_uniform_k5", 5, Metric::Euclidean, Vote::Uniform),
    ];
    for fold in exp["folds"].as_array().unwrap() {
        let f = fold["fold"].as_u64().unwrap() as usize;
        let (xtr, ytr, xte, _) = split(&data, f);
        for (name, k, metric, vote) in settings {
            let reference = &fold["knn"][name];
            if let Some(n) = reference.get("stable_order_disagreements") {
                assert_eq!(n.as_u64(), Some(0), "fold {f} {name}: fixture tie check");
            }
            let probe = KnnProbe::new(KnnParams {
                k,
                metric,
                vote,
                temperature: t,
                standardize: false,
            })
            .unwrap();
            let got = probe.predict(xtr.view(), &ytr, 10, xte.view());
            let want = as_u32s(&reference["predictions"]);
            let wrong: Vec<usize> = (0..want.len()).filter(|&i| got[i] != want[i]).collect();
            assert!(
                wrong.is_empty(),
                "fold {f} {name}: {} differ: {wrong:?}",
                wrong.len()
            );
        }
    }
}

#[test]
fn linear_probe_matches_scikit_learn_logistic_regression() {
    // scikit-learn LogisticRegression(lbfgs, C = 1/(λ·n_train), λ = 1e-3, tol 1e-8,
    // max_iter 5000, no standardisation) test-fold accuracy and mean log-loss, written by
    // tests/reference/probe_digits.py. Same objective up to the factor n·λ, so the optima
    // coincide: accuracy within 1 point, log-loss within 2 %.
    let data = load_digits();
    let exp = expected();
    let l2 = exp["l2"].as_f64().unwrap();
    let probe = LinearProbe::new(LinearParams {
        l2,
        standardize: false,
        class_weight: ClassWeight::None,
        tol: 1e-7,
        max_iter: 5000,
    })
    .unwrap();
    for fold in exp["folds"].as_array().unwrap() {
        let f = fold["fold"].as_u64().unwrap() as usize;
        let (xtr, ytr, xte, yte) = split(&data, f);
        let model = probe.fit(xtr.view(), &ytr, 10, None).unwrap();
        assert!(model.converged, "fold {f}: {} iterations", model.iterations);
        let proba = model.predict_proba(xte.view());
        let pred = model.predict(xte.view());
        let n = yte.len() as f64;
        let accuracy = pred.iter().zip(&yte).filter(|(p, y)| p == y).count() as f64 / n;
        let log_loss = -yte
            .iter()
            .enumerate()
            .map(|(i, &y)| proba[[i, y as usize]].ln())
            .sum::<f64>()
            / n;
        let want_acc = fold["linear"]["accuracy"].as_f64().unwrap();
        let want_ll = fold["linear"]["log_loss"].as_f64().unwrap();
        eprintln!(
            "fold {f}: accuracy {accuracy:.4} (sklearn {want_acc:.4}), log-loss {log_loss:.5} \
             (sklearn {want_ll:.5}), {} iterations",
            model.iterations
        );
        assert!(
            (accuracy - want_acc).abs() <= 0.01,
            "fold {f}: {accuracy} vs {want_acc}"
        );
        assert!(
            (log_loss - want_ll).abs() <= 0.02 * want_ll,
            "fold {f}: {log_loss} vs {want_ll}"
        );
    }
}
