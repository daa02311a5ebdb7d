//! Scores, log loss and ECE against scikit-learn (tests/reference/eval_metrics.py) and a worked
//! example of Guo et al. 2017's ECE.

use embloom::eval::{ece, grown_class_recall, log_loss, score};
use ndarray::{Array2, array};
use serde_json::Value;

fn fixture() -> Value {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/eval/metrics.json"
    );
    serde_json::from_str(&std::fs::read_to_string(path).expect("fixture")).expect("json")
}

fn u32s(v: &Value) -> Vec<u32> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_u64().unwrap() as u32)
        .collect()
}

fn f64s(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol
}

#[test]
fn scores_match_scikit_learn() {
    let f = fixture();
    let (t, p) = (u32s(&f["y_true"]), u32s(&f["y_pred"]));
    let s = score(&t, &p, 6);
    // scikit-learn accuracy_score / balanced_accuracy_score / f1_score(average="macro",
    // zero_division=0), via tests/reference/eval_metrics.py.
    assert!(
        close(s.accuracy, f["accuracy"].as_f64().unwrap(), 1e-12),
        "{}",
        s.accuracy
    );
    assert!(
        close(
            s.balanced_accuracy,
            f["balanced_accuracy"].as_f64().unwrap(),
            1e-12
        ),
        "{}",
        s.balanced_accuracy
    );
    assert!(
        close(s.macro_f1, f["macro_f1"].as_f64().unwrap(), 1e-12),
        "{}",
        s.macro_f1
    );
    // scikit-learn precision_recall_fscore_support(labels=range(6), zero_division=0), same script.
    let (pr, re, f1, sup) = (
        f64s(&f["precision"]),
        f64s(&f["recall"]),
        f64s(&f["f1"]),
        u32s(&f["support"]),
    );
    assert_eq!(s.per_class.len(), 6);
    for c in 0..6 {
        let cs = &s.per_class[c];
        assert!(close(cs.precision, pr[c], 1e-12), "precision {c}");
        assert!(close(cs.recall, re[c], 1e-12), "recall {c}");
        assert!(close(cs.f1, f1[c], 1e-12), "f1 {c}");
        assert_eq!(cs.support, sup[c] as usize, "support {c}");
    }
    // The two default label sets differ here (class 4 never predicted, class 5 never true);
    // scikit-learn's macro-F1 counts class 5, balanced accuracy does not.
    assert_eq!(s.per_class[5].support, 0);
    assert_eq!(s.per_class[4].precision, 0.0);
}

#[test]
fn grown_class_recall_averages_supported_classes() {
    let f = fixture();
    let s = score(&u32s(&f["y_true"]), &u32s(&f["y_pred"]), 6);
    let re = f64s(&f["recall"]);
    // Definition (metrics.rs doc): mean recall over grown classes with support; recalls from
    // scikit-learn via tests/reference/eval_metrics.py. Class 5 has no support and is skipped.
    let got = grown_class_recall(&s, &[3, 4, 5]).unwrap();
    assert!(close(got, (re[3] + re[4]) / 2.0, 1e-12));
    assert_eq!(grown_class_recall(&s, &[5]), None);
    assert_eq!(grown_class_recall(&s, &[]), None);
}

#[test]
fn log_loss_matches_scikit_learn() {
    let f = fixture();
    let rows: Vec<Vec<f64>> = f["proba"].as_array().unwrap().iter().map(f64s).collect();
    let proba = Array2::from_shape_fn((rows.len(), 6), |(i, j)| rows[i][j]);
    let t = u32s(&f["proba_true"]);
    // scikit-learn log_loss(labels=range(6)) with its finfo(float64).eps clipping, via
    // tests/reference/eval_metrics.py (rows 0 and 1 hold exact 1 and 0 for the true class).
    let got = log_loss(&t, proba.view());
    assert!(close(got, f["log_loss"].as_f64().unwrap(), 1e-12), "{got}");
}

#[test]
fn ece_worked_example() {
    // Guo et al. 2017, eq. 3, worked by hand with B = 15 bins (bin i = (i/15, (i+1)/15]):
    //   row  conf  pred ok  bin
    //   0    0.90  yes      13  (0.8667, 0.9333]
    //   1    0.70  no       10  (0.6667, 0.7333]
    //   2    0.72  yes      10
    //   3    0.40  no        5  (0.3333, 0.4000]  — 0.4 is the upper edge of bin 5, not bin 6
    //   4    0.41  yes       6  (0.4000, 0.4667]
    // ECE = 1/5·|1 − 0.9| + 2/5·|0.5 − 0.71| + 1/5·|0 − 0.4| + 1/5·|1 − 0.41|
    //     = 0.02 + 0.084 + 0.08 + 0.118 = 0.302
    // (had row 3 fallen into bin 6 with row 4 it would be 0.142).
    let proba = array![
        [0.9, 0.05, 0.05],
        [0.2, 0.7, 0.1],
        [0.1, 0.72, 0.18],
        [0.4, 0.3, 0.3],
        [0.41, 0.3, 0.29]
    ];
    let y = [0, 0, 1, 2, 0];
    assert!(close(ece(&y, proba.view(), 15), 0.302, 1e-12));
    // One bin: |accuracy − mean confidence| = |3/5 − 3.13/5| = 0.026 (by hand).
    assert!(close(ece(&y, proba.view(), 1), 0.026, 1e-12));
    // No rows: NaN (embloom's convention).
    assert!(ece(&[], Array2::<f64>::zeros((0, 3)).view(), 15).is_nan());
}

#[test]
fn empty_and_out_of_range_inputs_do_not_panic() {
    // common practice, no source: nothing to score gives NaN means, not a panic.
    let s = score(&[], &[], 3);
    assert!(s.accuracy.is_nan() && s.balanced_accuracy.is_nan() && s.macro_f1.is_nan());
    // A label past n_classes widens per_class instead of indexing out of bounds.
    let s = score(&[0, 4], &[0, 4], 2);
    assert_eq!(s.per_class.len(), 5);
    assert_eq!(s.accuracy, 1.0);
}
