//! Confusion counts summed over test folds, and the cells that moved against `none`.

use embloom::assess::results::FoldRecord;
use embloom::assess::{MethodId, confusions};
use embloom::eval::interval::TestOutcome;
use embloom::probe::ProbeKind;

/// A fold record with the given test labels and predictions; the other fields do not enter
/// the counts.
fn record(method: &str, fold: usize, labels: &[u32], pred: &[u32]) -> FoldRecord {
    FoldRecord {
        repeat: 0,
        fold,
        method: method.parse().unwrap(),
        probe: ProbeKind::Knn,
        train_real: 8,
        train_synthetic: 0,
        test: labels.len(),
        metrics: Vec::new(),
        class_recall: Vec::new(),
        converged: None,
        outcome: TestOutcome {
            rows: (0..labels.len()).map(|i| fold * 4 + i).collect(),
            labels: labels.to_vec(),
            pred: pred.to_vec(),
        },
    }
}

#[test]
fn counts_and_changes_match_a_hand_worked_example() {
    // Worked by hand. Classes a=0, b=1, c=2; two folds of 4 test rows.
    //   none, fold 0: true a a b c, predicted a b b c
    //   none, fold 1: true a b b c, predicted a b c c
    //   => (a,a) 2, (a,b) 1, (b,b) 2, (b,c) 1, (c,c) 2              (8 rows)
    //   interpolate, fold 0: true a a b c, predicted a a b b
    //   interpolate, fold 1: true a b b c, predicted a c c c
    //   => (a,a) 3, (b,b) 1, (b,c) 2, (c,b) 1, (c,c) 1              (8 rows)
    // Off-diagonal changes, interpolate − none: (b,c) +1, (c,b) +1, (a,b) −1.
    let records = vec![
        record("none", 0, &[0, 0, 1, 2], &[0, 1, 1, 2]),
        record("none", 1, &[0, 1, 1, 2], &[0, 1, 2, 2]),
        record("interpolate", 0, &[0, 0, 1, 2], &[0, 0, 1, 1]),
        record("interpolate", 1, &[0, 1, 1, 2], &[0, 2, 2, 2]),
    ];
    let methods: Vec<MethodId> = vec!["none".parse().unwrap(), "interpolate".parse().unwrap()];
    let classes: Vec<String> = ["a", "b", "c"].map(String::from).to_vec();
    let (matrices, changes) = confusions(&records, &methods, &[ProbeKind::Knn], &classes);

    assert_eq!(matrices.len(), 2);
    assert_eq!(
        matrices[0].cells,
        vec![[0, 0, 2], [0, 1, 1], [1, 1, 2], [1, 2, 1], [2, 2, 2]]
    );
    assert_eq!(
        matrices[1].cells,
        vec![[0, 0, 3], [1, 1, 1], [1, 2, 2], [2, 1, 1], [2, 2, 1]]
    );
    // Every matrix sums to the test rows of its folds.
    for m in &matrices {
        let total: u64 = m.cells.iter().map(|c| c[2]).sum();
        assert_eq!(total, 8);
        assert_eq!(m.test_rows, 8);
    }

    let listed: Vec<(&str, &str, u64, u64, i64)> = changes
        .iter()
        .map(|c| {
            assert_eq!(c.method, "interpolate");
            (
                c.true_class.as_str(),
                c.predicted_class.as_str(),
                c.baseline_count,
                c.count,
                c.change,
            )
        })
        .collect();
    // Rises first (largest first, ties by class order), then falls.
    assert_eq!(
        listed,
        vec![
            ("b", "c", 1, 2, 1),
            ("c", "b", 0, 1, 1),
            ("a", "b", 1, 0, -1)
        ]
    );
}

#[test]
fn a_method_without_a_form_for_the_probe_gets_no_matrix() {
    // logit-adjust has no k-NN form (its cells are left empty everywhere else too), so it
    // gets neither a matrix nor changes, even when records exist (common practice, no source).
    let records = vec![
        record("none", 0, &[0, 1], &[0, 1]),
        record("logit-adjust", 0, &[0, 1], &[1, 1]),
    ];
    let methods: Vec<MethodId> = vec!["none".parse().unwrap(), "logit-adjust".parse().unwrap()];
    let classes: Vec<String> = ["a", "b"].map(String::from).to_vec();
    let (matrices, changes) = confusions(&records, &methods, &[ProbeKind::Knn], &classes);
    assert_eq!(matrices.len(), 1);
    assert!(changes.is_empty());
}
