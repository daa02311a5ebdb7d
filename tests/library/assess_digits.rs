//! `assess` on scikit-learn's bundled digits data with an explicit fold column (fixture made by
//! tests/reference/probe_digits.py): the given folds are used as they are, the k-NN probe's
//! per-fold accuracy equals that of scikit-learn's KNeighborsClassifier predictions, and the
//! linear probe is within 1 point of accuracy and 2% of log-loss of LogisticRegression(lbfgs).

use crate::common;

use common::*;
use serde_json::Value;

fn fixture(name: &str) -> std::path::PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/probe")
        .join(name)
}

/// Labels and fold of every row of digits.csv (columns label, fold, f0..).
fn labels_and_folds() -> Vec<(String, i64)> {
    let text = std::fs::read_to_string(fixture("digits.csv")).unwrap();
    text.lines()
        .skip(1)
        .map(|l| {
            let mut it = l.split(',');
            (
                it.next().unwrap().to_string(),
                it.next().unwrap().parse().unwrap(),
            )
        })
        .collect()
}

fn metric(record: &Value, name: &str) -> f64 {
    record["metrics"][name].as_f64().unwrap()
}

#[test]
fn digits_given_folds_match_scikit_learn() {
    let expected: Value =
        serde_json::from_str(&std::fs::read_to_string(fixture("digits_expected.json")).unwrap())
            .unwrap();
    let l2 = expected["l2"].as_f64().unwrap().to_string();
    let csv = fixture("digits.csv");
    let o = embloom(
        &[
            "assess",
            csv.to_str().unwrap(),
            "--methods",
            "none",
            "--probes",
            "knn,linear",
            "--knn-k",
            "10",
            "--knn-metric",
            "cosine",
            "--linear-l2",
            &l2,
            "--linear-standardize",
            "off",
            "--linear-max-iter",
            "2000",
            "--json",
            "--quiet",
        ],
        &[],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let results: Value = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(results["split"], "given");
    let rows = labels_and_folds();
    let folds = expected["folds"].as_array().unwrap();
    let records = results["folds"].as_array().unwrap();
    assert_eq!(records.len(), 2 * folds.len());
    for f in folds {
        let fold = f["fold"].as_i64().unwrap();
        let truth: Vec<&str> = rows
            .iter()
            .filter(|r| r.1 == fold)
            .map(|r| r.0.as_str())
            .collect();
        let preds = f["knn"]["cosine_uniform_k10"]["predictions"]
            .as_array()
            .unwrap();
        let hits = truth
            .iter()
            .zip(preds)
            .filter(|(t, p)| p.as_i64().unwrap().to_string() == **t)
            .count();
        let sk_knn_accuracy = hits as f64 / truth.len() as f64;
        let find = |probe: &str| {
            records
                .iter()
                .find(|r| r["probe"] == probe && r["fold"].as_i64() == Some(fold))
                .unwrap()
        };
        let knn = find("knn");
        assert_eq!(knn["test"].as_u64().unwrap() as usize, truth.len());
        assert_eq!(
            metric(knn, "accuracy"),
            sk_knn_accuracy,
            "fold {fold}: k-NN accuracy differs from scikit-learn's"
        );
        let linear = find("linear");
        let sk_acc = f["linear"]["accuracy"].as_f64().unwrap();
        let sk_loss = f["linear"]["log_loss"].as_f64().unwrap();
        assert!(
            (metric(linear, "accuracy") - sk_acc).abs() <= 0.01,
            "fold {fold}: linear accuracy {} vs {sk_acc}",
            metric(linear, "accuracy")
        );
        assert!(
            (metric(linear, "log_loss") - sk_loss).abs() <= 0.02 * sk_loss,
            "fold {fold}: log-loss {} vs {sk_loss}",
            metric(linear, "log_loss")
        );
    }
}
