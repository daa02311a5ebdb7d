//! The corrected resampled t-test (Nadeau & Bengio 2003) and the Student-t distribution,
//! against scipy.stats.t (tests/reference/eval_stats.py).

use embloom::eval::{corrected_paired_t, t_cdf, t_quantile};
use serde_json::Value;

fn fixture() -> Value {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/eval/stats.json"
    );
    serde_json::from_str(&std::fs::read_to_string(path).expect("fixture")).expect("json")
}

fn num(v: &Value) -> f64 {
    v.as_f64().unwrap()
}

/// Within 1e-9, absolute or relative (p-values far in the tail are tiny).
fn close(a: f64, b: f64) -> bool {
    let d = (a - b).abs();
    d <= 1e-9 || d <= 1e-9 * b.abs()
}

#[test]
fn corrected_interval_matches_scipy() {
    let f = fixture();
    for case in f["cases"].as_array().unwrap() {
        let diffs: Vec<f64> = case["diffs"].as_array().unwrap().iter().map(num).collect();
        let iv = corrected_paired_t(
            &diffs,
            num(&case["n_train"]),
            num(&case["n_test"]),
            num(&case["level"]),
        );
        // scipy.stats.t.ppf / t.sf on Nadeau & Bengio's corrected variance, via
        // tests/reference/eval_stats.py.
        assert_eq!(iv.n, diffs.len());
        assert!(
            close(iv.mean, num(&case["mean"])),
            "mean {} vs {}",
            iv.mean,
            case["mean"]
        );
        assert!(
            close(iv.low, num(&case["low"])),
            "low {} vs {}",
            iv.low,
            case["low"]
        );
        assert!(
            close(iv.high, num(&case["high"])),
            "high {} vs {}",
            iv.high,
            case["high"]
        );
        assert!(
            close(iv.p_value, num(&case["p_value"])),
            "p {} vs {}",
            iv.p_value,
            case["p_value"]
        );
    }
}

#[test]
fn t_cdf_and_quantile_match_scipy() {
    let f = fixture();
    // scipy.stats.t.cdf over a grid of t and df, via tests/reference/eval_stats.py.
    for c in f["cdf"].as_array().unwrap() {
        let got = t_cdf(num(&c["t"]), num(&c["df"]));
        assert!(
            close(got, num(&c["cdf"])),
            "cdf({}, {}) = {got} vs {}",
            c["t"],
            c["df"],
            c["cdf"]
        );
    }
    // scipy.stats.t.ppf over a grid of p and df, same script.
    for c in f["ppf"].as_array().unwrap() {
        let got = t_quantile(num(&c["p"]), num(&c["df"]));
        assert!(
            close(got, num(&c["ppf"])),
            "ppf({}, {}) = {got} vs {}",
            c["p"],
            c["df"],
            c["ppf"]
        );
    }
}

#[test]
fn edge_cases_follow_the_documented_conventions() {
    // embloom's documented convention (stats.rs): fewer than two differences say nothing
    // about spread — NaN bounds and p, the mean of what there is.
    let one = corrected_paired_t(&[0.3], 90.0, 10.0, 0.95);
    assert_eq!(one.mean, 0.3);
    assert!(one.low.is_nan() && one.high.is_nan() && one.p_value.is_nan());
    assert!(corrected_paired_t(&[], 90.0, 10.0, 0.95).mean.is_nan());
    // Same convention: zero spread gives no interval (NaN bounds and p), never p = 0 or 1
    // from a vanished variance.
    for flat in [[0.02; 5], [0.0; 5]] {
        let iv = corrected_paired_t(&flat, 90.0, 10.0, 0.95);
        assert_eq!(iv.mean, flat[0]);
        assert!(iv.low.is_nan() && iv.high.is_nan() && iv.p_value.is_nan());
    }
    // Same convention: an impossible level gives NaN bounds but keeps the p-value.
    let bad = corrected_paired_t(&[0.1, 0.2, 0.0], 90.0, 10.0, 1.5);
    assert!(bad.low.is_nan() && bad.p_value.is_finite());
}

#[test]
fn quantile_inverts_cdf() {
    // from memory: the quantile is the inverse of the CDF, and t(1) is the Cauchy
    // distribution, whose 0.75 quantile is tan(π/4) = 1.
    for df in [1.0, 2.5, 7.0, 40.0] {
        for p in [0.01, 0.2, 0.5, 0.9, 0.999] {
            assert!((t_cdf(t_quantile(p, df), df) - p).abs() < 1e-12);
        }
    }
    assert!((t_quantile(0.75, 1.0) - 1.0).abs() < 1e-12);
}
