//! k-NN vote ties against scikit-learn: classes are numbered as numpy's `unique` orders them
//! and a tied vote goes to the lowest class, whatever order the file lists the classes in.

use std::path::Path;

use embloom::io::{ReadOptions, read};
use embloom::neighbors::Metric;
use embloom::probe::{KnnParams, KnnProbe, Vote};

const FIXTURES: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fixtures/probe");

fn predictions(file: &str, k: usize) -> Vec<String> {
    let d = read(&Path::new(FIXTURES).join(file), &ReadOptions::default())
        .unwrap()
        .dataset;
    let folds = d.folds.clone().unwrap();
    let rows = |f: i64| -> Vec<usize> { (0..d.n_rows()).filter(|&i| folds[i] == f).collect() };
    let (train, test) = (d.select(&rows(0)), d.select(&rows(1)));
    let probe = KnnProbe::new(KnnParams {
        k,
        metric: Metric::Euclidean,
        vote: Vote::Uniform,
        temperature: 0.07,
        standardize: false,
    })
    .unwrap();
    probe
        .predict(train.view(), &train.labels, d.n_classes(), test.view())
        .into_iter()
        .map(|c| d.classes[c as usize].clone())
        .collect()
}

#[test]
fn tied_votes_match_scikit_learn_for_integer_and_text_labels() {
    // scikit-learn KNeighborsClassifier(n_neighbors=4, metric="euclidean", algorithm="brute"),
    // written by tests/reference/knn_ties.py: every test row has a 2 + 2 tied vote.
    let exp: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(Path::new(FIXTURES).join("knn_ties_expected.json")).unwrap(),
    )
    .unwrap();
    let k = exp["k"].as_u64().unwrap() as usize;
    let want = |key: &str| -> Vec<String> {
        exp[key]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| match v {
                serde_json::Value::String(s) => s.clone(),
                other => other.to_string(),
            })
            .collect()
    };
    assert_eq!(predictions("knn_ties_int.csv", k), want("int_predictions"));
    assert_eq!(
        predictions("knn_ties_text.csv", k),
        want("text_predictions")
    );
}
