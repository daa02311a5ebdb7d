//! Splits: stratified k-fold, stratified group k-fold and given folds.

use std::collections::{BTreeSet, HashMap};

use embloom::Dataset;
use embloom::eval::{Fold, SplitKind, make_folds, thin_classes};
use ndarray::Array2;

fn dataset(labels: Vec<u32>) -> Dataset {
    let n_classes = labels.iter().map(|&l| l as usize + 1).max().unwrap_or(0);
    let x = Array2::from_shape_fn((labels.len(), 2), |(i, j)| (i * 2 + j) as f32);
    Dataset::new(x, labels, (0..n_classes).map(|c| format!("c{c}")).collect())
}

/// Labels with the given per-class counts, interleaved so classes are not in blocks.
fn labels_with(counts: &[usize]) -> Vec<u32> {
    let mut left = counts.to_vec();
    let mut out = Vec::new();
    while left.iter().any(|&c| c > 0) {
        for (c, n) in left.iter_mut().enumerate() {
            if *n > 0 {
                out.push(c as u32);
                *n -= 1;
            }
        }
    }
    out
}

/// Every row in exactly one test fold per repeat; train is the sorted complement.
fn assert_partition(folds: &[Fold], n: usize, k: usize, repeats: usize) {
    assert_eq!(folds.len(), k * repeats);
    for r in 0..repeats {
        let mut seen = vec![0usize; n];
        for f in folds.iter().filter(|f| f.repeat == r) {
            assert!(
                f.test.windows(2).all(|w| w[0] < w[1]) && f.train.windows(2).all(|w| w[0] < w[1])
            );
            assert!(!f.test.is_empty());
            assert_eq!(f.test.len() + f.train.len(), n);
            let test: BTreeSet<usize> = f.test.iter().copied().collect();
            assert!(f.train.iter().all(|i| !test.contains(i)));
            for &i in &f.test {
                seen[i] += 1;
            }
        }
        assert!(
            seen.iter().all(|&s| s == 1),
            "repeat {r}: rows not in exactly one test fold"
        );
    }
}

#[test]
fn stratified_folds_are_balanced_partitions() {
    let counts = [50, 30, 17, 4, 2];
    let ds = dataset(labels_with(&counts));
    let (k, repeats) = (5, 3);
    let (kind, folds) = make_folds(&ds, k, repeats, 11).unwrap();
    assert_eq!(kind, SplitKind::Stratified);
    // common practice, no source (stratified k-fold): a partition of the rows per repeat.
    assert_partition(&folds, ds.n_rows(), k, repeats);
    for f in &folds {
        // common practice, no source: each class's test count is within one row of n_c / k.
        for (c, &n_c) in counts.iter().enumerate() {
            let got = f.test.iter().filter(|&&i| ds.labels[i] == c as u32).count();
            assert!(
                got == n_c / k || got == n_c.div_ceil(k),
                "class {c}: {got} of {n_c}"
            );
        }
        // and overall fold sizes differ by at most one row (103 rows → 20 or 21).
        assert!(f.test.len() == 20 || f.test.len() == 21, "{}", f.test.len());
    }
    // Classes 3 and 4 have fewer rows than folds (definition of thin_classes).
    assert_eq!(thin_classes(&ds, k), vec![3, 4]);
}

#[test]
fn folds_are_deterministic_and_repeats_reshuffle() {
    // common practice, no source: same seed, same folds; another repeat or seed, other folds.
    let ds = dataset(labels_with(&[40, 25, 10]));
    let (_, a) = make_folds(&ds, 4, 2, 5).unwrap();
    let (_, b) = make_folds(&ds, 4, 2, 5).unwrap();
    let (_, c) = make_folds(&ds, 4, 2, 6).unwrap();
    assert_eq!(a, b);
    assert_ne!(a, c);
    let tests_of = |r: usize| {
        a.iter()
            .filter(|f| f.repeat == r)
            .map(|f| f.test.clone())
            .collect::<Vec<_>>()
    };
    assert_ne!(tests_of(0), tests_of(1));
}

#[test]
fn groups_never_straddle_train_and_test() {
    // 40 groups of 1–6 rows; most groups hold one class, every fifth mixes two.
    let mut labels = Vec::new();
    let mut groups = Vec::new();
    for g in 0..40usize {
        let size = 1 + (g * 7) % 6;
        for r in 0..size {
            let class = if g % 5 == 0 && r % 2 == 1 {
                (g + 1) % 3
            } else {
                g % 3
            };
            labels.push(class as u32);
            groups.push(format!("patient-{g}"));
        }
    }
    let mut ds = dataset(labels);
    ds.groups = Some(groups.clone());
    let (k, repeats) = (5, 2);
    let (kind, folds) = make_folds(&ds, k, repeats, 3).unwrap();
    assert_eq!(kind, SplitKind::StratifiedGroup);
    assert_partition(&folds, ds.n_rows(), k, repeats);
    // common practice, no source (group k-fold): no group on both sides of any fold.
    for f in &folds {
        let test: BTreeSet<&str> = f.test.iter().map(|&i| groups[i].as_str()).collect();
        assert!(f.train.iter().all(|&i| !test.contains(groups[i].as_str())));
    }
    // The greedy balance keeps each class's test count within one group (≤ 6 rows) of n_c / k
    // (a property of the greedy rule in protocol.rs, no outside source).
    let counts = ds.class_counts();
    for f in &folds {
        for (c, &n_c) in counts.iter().enumerate() {
            let got = f.test.iter().filter(|&&i| ds.labels[i] == c as u32).count() as f64;
            assert!(
                (got - n_c as f64 / k as f64).abs() <= 6.0,
                "class {c}: {got} of {n_c}"
            );
        }
    }
    // Determinism and reshuffling across repeats (common practice, no source).
    assert_eq!(folds, make_folds(&ds, k, repeats, 3).unwrap().1);
    let tests_of = |r: usize| {
        folds
            .iter()
            .filter(|f| f.repeat == r)
            .map(|f| f.test.clone())
            .collect::<Vec<_>>()
    };
    assert_ne!(tests_of(0), tests_of(1));
    // As many folds as groups is leave-one-group-out.
    let (_, logo) = make_folds(&ds, 40, 1, 3).unwrap();
    for f in &logo {
        let test: BTreeSet<&str> = f.test.iter().map(|&i| groups[i].as_str()).collect();
        assert_eq!(test.len(), 1);
    }
    // More folds than groups cannot be honoured.
    assert!(make_folds(&ds, 41, 1, 3).is_err());
}

#[test]
fn given_folds_are_reproduced() {
    let ds0 = dataset(labels_with(&[6, 6]));
    let given: Vec<i64> = vec![7, 3, 3, 7, -1, 7, 3, -1, 7, 3, -1, 7];
    let mut ds = ds0.clone();
    ds.folds = Some(given.clone());
    let (kind, folds) = make_folds(&ds, 5, 1, 0).unwrap();
    assert_eq!(kind, SplitKind::Given);
    assert_partition(&folds, 12, 3, 1);
    // The input's own assignment: distinct values sorted (−1, 3, 7), each one test fold.
    for (f, value) in folds.iter().zip([-1i64, 3, 7]) {
        let expect: Vec<usize> = (0..12).filter(|&i| given[i] == value).collect();
        assert_eq!(f.test, expect);
    }
    // Repeats do not apply to given folds.
    assert!(matches!(
        make_folds(&ds, 5, 2, 0),
        Err(embloom::Error::Param { .. })
    ));
    // One distinct value holds nothing out.
    ds.folds = Some(vec![1; 12]);
    assert!(make_folds(&ds, 5, 1, 0).is_err());
}

#[test]
fn impossible_requests_are_errors() {
    // common practice, no source: fewer than two folds or two classes cannot be assessed.
    let ds = dataset(labels_with(&[5, 5]));
    assert!(matches!(
        make_folds(&ds, 1, 1, 0),
        Err(embloom::Error::Param { .. })
    ));
    assert!(matches!(
        make_folds(&ds, 11, 1, 0),
        Err(embloom::Error::Param { .. })
    ));
    assert!(matches!(
        make_folds(&ds, 2, 0, 0),
        Err(embloom::Error::Param { .. })
    ));
    let single = dataset(vec![0; 8]);
    assert!(matches!(
        make_folds(&single, 2, 1, 0),
        Err(embloom::Error::Data { .. })
    ));
    // Mismatched side columns are refused, not indexed out of bounds.
    let mut bad = ds.clone();
    bad.groups = Some(vec!["a".into(); 3]);
    assert!(make_folds(&bad, 2, 1, 0).is_err());
}

#[test]
fn split_kind_serialises_kebab_case() {
    // common practice, no source: machine-readable output spells names in kebab-case.
    let names: HashMap<&str, SplitKind> = [
        ("\"stratified\"", SplitKind::Stratified),
        ("\"stratified-group\"", SplitKind::StratifiedGroup),
        ("\"given\"", SplitKind::Given),
    ]
    .into();
    for (json, kind) in names {
        assert_eq!(serde_json::to_string(&kind).unwrap(), json);
        assert_eq!(serde_json::from_str::<SplitKind>(json).unwrap(), kind);
    }
}
