//! The paired-difference intervals (src/eval/interval/) against their numpy / scipy /
//! scikit-learn transcriptions (tests/reference/eval_interval.py), and the degenerate cases
//! that must print "no interval" rather than p = 0 or 1.

use embloom::eval::interval::{
    IntervalKind, NoInterval, PairedFold, PooledMetric, TestOutcome, bootstrap_percentile,
    counts_pooled, normal_cdf, normal_quantile, paired,
};
use serde_json::Value;

fn fixture() -> Value {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/eval/interval.json"
    );
    serde_json::from_str(&std::fs::read_to_string(path).expect("fixture")).expect("json")
}

fn num(v: &Value) -> f64 {
    v.as_f64().unwrap()
}

fn close(a: f64, b: f64, tol: f64) -> bool {
    let d = (a - b).abs();
    d <= tol || d <= tol * b.abs()
}

fn list<T: serde::de::DeserializeOwned>(v: &Value) -> Vec<T> {
    serde_json::from_value(v.clone()).unwrap()
}

/// The method and baseline outcomes of every record of a fixture case.
fn outcomes(case: &Value) -> Vec<(usize, usize, TestOutcome, TestOutcome)> {
    case["records"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| {
            let rows: Vec<usize> = list(&r["rows"]);
            let labels: Vec<u32> = list(&r["labels"]);
            let o = |key: &str| TestOutcome {
                rows: rows.clone(),
                labels: labels.clone(),
                pred: list(&r[key]),
            };
            (
                r["repeat"].as_u64().unwrap() as usize,
                r["train_rows"].as_u64().unwrap() as usize,
                o("method"),
                o("baseline"),
            )
        })
        .collect()
}

fn folds(o: &[(usize, usize, TestOutcome, TestOutcome)]) -> Vec<PairedFold<'_>> {
    o.iter()
        .map(|(repeat, train_rows, m, b)| PairedFold {
            repeat: *repeat,
            train_rows: *train_rows,
            method: m,
            baseline: b,
        })
        .collect()
}

fn check(kind: IntervalKind, metric: PooledMetric, case: &Value, key: &str) {
    let o = outcomes(case);
    let f = folds(&o);
    let c = case["n_classes"].as_u64().unwrap() as usize;
    let e = &paired(kind, &f, &[metric], c, 0.95, 1)[0];
    let want = &case[key];
    for (got, field) in [
        (e.delta, "delta"),
        (e.low, "low"),
        (e.high, "high"),
        (e.p_value, "p_value"),
    ] {
        assert!(
            close(got, num(&want[field]), 1e-9),
            "{kind} {key} {field}: {got} vs {}",
            want[field]
        );
    }
}

#[test]
fn cv_clt_matches_the_numpy_transcription() {
    // Bayle et al. (2020) per-row CLT, stratified per class; scipy.stats.norm, via
    // tests/reference/eval_interval.py.
    for case in fixture()["cases"].as_array().unwrap() {
        check(
            IntervalKind::CvClt,
            PooledMetric::BalancedAccuracy,
            case,
            "cv_clt",
        );
        let grown: Vec<u32> = list(&case["grown"]);
        check(
            IntervalKind::CvClt,
            PooledMetric::Recall(grown),
            case,
            "grown_cv_clt",
        );
    }
}

#[test]
fn cv_clt_folds_matches_the_scipy_transcription() {
    // Variance floored at the fold-level one, Welch–Satterthwaite df, scipy.stats.t; same script.
    for case in fixture()["cases"].as_array().unwrap() {
        check(
            IntervalKind::CvCltFolds,
            PooledMetric::BalancedAccuracy,
            case,
            "cv_clt_folds",
        );
    }
}

#[test]
fn corrected_t_matches_the_scipy_transcription() {
    // Nadeau & Bengio (2003) on per-fold balanced-accuracy differences (scikit-learn's
    // balanced_accuracy_score per fold); same script.
    for case in fixture()["cases"].as_array().unwrap() {
        check(
            IntervalKind::CorrectedT,
            PooledMetric::BalancedAccuracy,
            case,
            "corrected_t",
        );
    }
}

#[test]
fn pooled_scores_match_scikit_learn() {
    // scikit-learn's f1_score(average="macro"), balanced_accuracy_score, precision_score and
    // f1_score per class on the test rows pooled over each repeat's folds (Forman & Scholz
    // 2010), averaged over repeats; same script.
    for case in fixture()["cases"].as_array().unwrap() {
        let o = outcomes(case);
        let f = folds(&o);
        let c = case["n_classes"].as_u64().unwrap() as usize;
        let metrics = [
            PooledMetric::MacroF1,
            PooledMetric::BalancedAccuracy,
            PooledMetric::Precision(0),
            PooledMetric::F1(c as u32 - 1),
        ];
        let got = counts_pooled(&f, &metrics, c);
        let want = &case["pooled_method"];
        for (g, key) in got
            .iter()
            .zip(["macro_f1", "balanced_accuracy", "precision_0", "f1_last"])
        {
            assert!(
                close(g.method, num(&want[key]), 1e-12),
                "{key}: {}",
                g.method
            );
        }
    }
}

#[test]
fn normal_distribution_matches_scipy() {
    // scipy.stats.norm.cdf / ppf, same script.
    let fx = fixture();
    for v in fx["normal"]["cdf"].as_array().unwrap() {
        let got = normal_cdf(num(&v["x"]));
        assert!(close(got, num(&v["cdf"]), 1e-10), "cdf {v}: {got}");
    }
    for v in fx["normal"]["ppf"].as_array().unwrap() {
        let got = normal_quantile(num(&v["p"]));
        assert!(close(got, num(&v["ppf"]), 1e-9), "ppf {v}: {got}");
    }
}

#[test]
fn bootstrap_percentile_matches_numpy() {
    // numpy.percentile (linear interpolation) and the (count + 1)/(B + 1) p-value, same script.
    let b = &fixture()["bootstrap_percentile"];
    let reps: Vec<f64> = list(&b["replicates"]);
    let (low, high, p) = bootstrap_percentile(&reps, 0.95).unwrap();
    assert!(close(low, num(&b["low"]), 1e-12));
    assert!(close(high, num(&b["high"]), 1e-12));
    assert!(close(p, num(&b["p_value"]), 1e-12));
}

/// `k` folds of `per_fold` rows of each of two classes, baseline always wrong on class 1,
/// method right on class 1 in the rows `right_on(fold, i)` says.
fn synthetic(
    k: usize,
    per_fold: usize,
    right_on: impl Fn(usize, usize) -> bool,
) -> Vec<(usize, usize, TestOutcome, TestOutcome)> {
    (0..k)
        .map(|f| {
            let rows: Vec<usize> = (0..2 * per_fold).map(|i| f * 2 * per_fold + i).collect();
            let labels: Vec<u32> = (0..2 * per_fold).map(|i| (i % 2) as u32).collect();
            let base: Vec<u32> = labels.iter().map(|_| 0).collect();
            let meth: Vec<u32> = labels
                .iter()
                .enumerate()
                .map(|(i, &l)| if l == 1 && right_on(f, i) { 1 } else { 0 })
                .collect();
            let o = |pred| TestOutcome {
                rows: rows.clone(),
                labels: labels.clone(),
                pred,
            };
            (0, 8 * per_fold, o(meth), o(base))
        })
        .collect()
}

#[test]
fn constant_fold_deltas_give_no_interval_never_p_zero() {
    // The correctness report's case: the grown class's recall moves by exactly +1 in every
    // fold (common practice, no source: zero spread is no evidence of certainty).
    let o = synthetic(5, 6, |_, _| true);
    let f = folds(&o);
    for kind in IntervalKind::ALL {
        let e = &paired(kind, &f, &[PooledMetric::Recall(vec![1])], 2, 0.95, 3)[0];
        assert_eq!(e.delta, 1.0, "{kind}");
        assert_eq!(
            e.no_interval,
            Some(NoInterval::NoVariation { folds: 5 }),
            "{kind}"
        );
        assert!(
            e.low.is_nan() && e.high.is_nan() && e.p_value.is_nan(),
            "{kind}"
        );
        assert!(!e.significant(), "{kind}");
        assert_eq!(
            e.no_interval.as_ref().unwrap().to_string(),
            "no interval (5 folds, no variation)"
        );
    }
}

#[test]
fn one_fold_with_a_value_gives_no_interval() {
    // Class 1 has test rows in one fold only (common practice, no source: one value has no spread).
    let mut o = synthetic(3, 6, |f, i| f == 0 || i % 4 == 1);
    for (fi, rec) in o.iter_mut().enumerate().skip(1) {
        for t in [&mut rec.2, &mut rec.3] {
            t.labels.iter_mut().for_each(|l| *l = 0);
        }
        let _ = fi;
    }
    let f = folds(&o);
    for kind in IntervalKind::ALL {
        let e = &paired(kind, &f, &[PooledMetric::Recall(vec![1])], 2, 0.95, 3)[0];
        assert_eq!(e.folds, 1, "{kind}: folds with a value, not folds run");
        assert_eq!(
            e.no_interval,
            Some(NoInterval::TooFewFolds { folds: 1 }),
            "{kind}"
        );
        assert!(e.p_value.is_nan() && !e.significant());
    }
}

#[test]
fn a_class_with_few_test_rows_per_fold_gives_no_interval() {
    // Three rows of the class per fold, below the five the interval module asks for.
    let o = synthetic(5, 3, |f, i| (f + i) % 3 != 0);
    let f = folds(&o);
    for kind in IntervalKind::ALL {
        let e = &paired(kind, &f, &[PooledMetric::Recall(vec![1])], 2, 0.95, 3)[0];
        assert!(
            matches!(e.no_interval, Some(NoInterval::FewTestRows { .. })),
            "{kind}: {:?}",
            e.no_interval
        );
        assert!(e.p_value.is_nan() && !e.significant());
    }
}

#[test]
fn varied_deltas_give_an_interval_with_p_strictly_inside() {
    // Enough rows and real spread: every kind gives low < high and 0 < p < 1 (from memory:
    // a continuous test statistic never gives p = 0 or 1 on finite data).
    let o = synthetic(5, 12, |f, i| (f * 7 + i * 3) % 5 < 2 + f % 2);
    let f = folds(&o);
    for kind in IntervalKind::ALL {
        let e = &paired(kind, &f, &[PooledMetric::BalancedAccuracy], 2, 0.95, 3)[0];
        assert!(e.no_interval.is_none(), "{kind}: {:?}", e.no_interval);
        assert!(e.low < e.high, "{kind}");
        assert!(
            e.p_value > 0.0 && e.p_value < 1.0,
            "{kind}: p {}",
            e.p_value
        );
    }
}
