//! `calibrated`: distribution calibration (Yang, Liu & Xu 2021). The draws for each base row
//! must follow N(μ′, Σ′) with the calibrated mean and covariance of the paper, here as
//! computed by the numpy transcription tests/reference/calibrated_stats.py (fixture
//! tests/fixtures/augment/calibrated_stats.json).

use embloom::Dataset;
use embloom::augment::{AugmentParams, FitNote, MethodKind, Plan, build, grow};
use embloom::error::Error;
use ndarray::Array2;

struct Case {
    row: usize,
    mean: Vec<f64>,
    cov: Vec<Vec<f64>>,
}

fn fixture() -> (Dataset, serde_json::Value) {
    let text = std::fs::read_to_string("tests/fixtures/augment/calibrated_stats.json").unwrap();
    let fx: serde_json::Value = serde_json::from_str(&text).unwrap();
    let rows: Vec<Vec<f32>> = serde_json::from_value(fx["rows"].clone()).unwrap();
    let labels: Vec<u32> = serde_json::from_value(fx["labels"].clone()).unwrap();
    let d = rows[0].len();
    let x = Array2::from_shape_vec((rows.len(), d), rows.into_iter().flatten().collect()).unwrap();
    let names = (0..5).map(|c| format!("c{c}")).collect();
    (Dataset::new(x, labels, names), fx)
}

fn cases(fx: &serde_json::Value, key: &str) -> Vec<Case> {
    fx[key]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| Case {
            row: c["row"].as_u64().unwrap() as usize,
            mean: serde_json::from_value(c["mean"].clone()).unwrap(),
            cov: serde_json::from_value(c["cov"].clone()).unwrap(),
        })
        .collect()
}

/// Compare the draws of each case's parent with its N(mean, cov): every mean coordinate and
/// covariance entry within 5 Monte-Carlo standard errors (se of a mean: sqrt(Σ_aa / N); of a
/// covariance entry: sqrt((Σ_aa Σ_bb + Σ_ab²) / N)).
fn check_draws(draws: &[(usize, Vec<f64>)], cases: &[Case]) {
    for case in cases {
        let mine: Vec<&Vec<f64>> = draws
            .iter()
            .filter(|(p, _)| *p == case.row)
            .map(|(_, v)| v)
            .collect();
        let n = mine.len() as f64;
        assert!(n > 5000.0, "row {}: only {n} draws", case.row);
        let d = case.mean.len();
        let mean: Vec<f64> = (0..d)
            .map(|j| mine.iter().map(|v| v[j]).sum::<f64>() / n)
            .collect();
        let s = &case.cov;
        for (j, (&got, &want)) in mean.iter().zip(&case.mean).enumerate() {
            let se = (s[j][j] / n).sqrt();
            assert!(
                (got - want).abs() < 5.0 * se,
                "row {} mean[{j}] {got} vs {want} (se {se})",
                case.row,
            );
        }
        for (a, row) in s.iter().enumerate() {
            for (b, &want) in row.iter().enumerate() {
                let got = mine
                    .iter()
                    .map(|v| (v[a] - mean[a]) * (v[b] - mean[b]))
                    .sum::<f64>()
                    / (n - 1.0);
                let se = ((s[a][a] * s[b][b] + want.powi(2)) / n).sqrt();
                assert!(
                    (got - want).abs() < 5.0 * se,
                    "row {} cov[{a}][{b}] {got} vs {want} (se {se})",
                    case.row,
                );
            }
        }
    }
}

fn params(tukey: Option<f64>) -> AugmentParams {
    AugmentParams {
        magnitude: Some(0.21),
        borrowed_classes: 2,
        tukey,
        ..AugmentParams::default()
    }
}

fn draws_of(ds: &Dataset, p: &AugmentParams, map: impl Fn(f32) -> f64) -> Vec<(usize, Vec<f64>)> {
    let method = build(MethodKind::Calibrated, p).unwrap();
    // Classes 3 (one row) and 4 (three rows) are grown; 0–2 lend.
    let plan = Plan {
        add: vec![0, 0, 0, 40_000, 120_000],
    };
    let g = grow(ds, method.as_ref(), &plan, false, 5, &[1]).unwrap();
    assert!(g.notes.is_empty(), "{:?}", g.notes);
    g.provenance
        .iter()
        .enumerate()
        .map(|(i, pr)| {
            assert!(pr.partner.is_none() && pr.weight == 0.21);
            (pr.parent, g.x.row(i).iter().map(|&v| map(v)).collect())
        })
        .collect()
}

#[test]
fn calibrated_draws_follow_the_papers_mean_and_covariance() {
    let (ds, fx) = fixture();
    assert_eq!(fx["k"], 2);
    let draws = draws_of(&ds, &params(None), f64::from);
    // A one-row class grows: all 40 000 rows of class 3 come from its single row.
    assert_eq!(draws.iter().filter(|(p, _)| *p == 165).count(), 40_000);
    check_draws(&draws, &cases(&fx, "plain"));
}

#[test]
fn calibrated_with_tukey_calibrates_in_the_transformed_space() {
    let (ds, fx) = fixture();
    // Rows come back through v^(1/λ); mapped forward again they are the draws in the
    // transformed space (values near 2.5 with spread ≈ 0.5, so the clamp at 0 never acts).
    let draws = draws_of(&ds, &params(Some(0.5)), |v| f64::from(v).sqrt());
    check_draws(&draws, &cases(&fx, "tukey_transformed"));
}

#[test]
fn calibrated_refuses_tukey_on_negative_features_and_notes_missing_lenders() {
    let (mut ds, _) = fixture();
    ds.x[[7, 2]] = -0.5;
    let method = build(MethodKind::Calibrated, &params(Some(0.5))).unwrap();
    match method.fit(&(&ds).into(), &[3, 4]) {
        Err(Error::Param { name, detail, .. }) => {
            assert_eq!(name, "tukey");
            assert!(
                detail.contains("training row 7 has -0.5 in column 2"),
                "{detail}"
            );
        }
        Err(e) => panic!("expected a tukey error, got {e}"),
        Ok(_) => panic!("expected a tukey error"),
    }
    // Without the transform negative values are fine; k = 5 asks for more lenders than the
    // four there are when only class 3 is grown (0, 1, 2 and the three-row class 4), so the
    // fit borrows from 4 and says so.
    let p = AugmentParams {
        borrowed_classes: 5,
        ..params(None)
    };
    let fitted = build(MethodKind::Calibrated, &p)
        .unwrap()
        .fit(&(&ds).into(), &[3])
        .unwrap();
    assert!(
        matches!(&fitted.notes()[0], FitNote::Adjusted { class: 3, detail } if detail.contains("from 4 classes instead of 5"))
    );
    // Growing every class leaves nothing to borrow from: skipped, or refused when strict.
    let all: Vec<u32> = (0..5).collect();
    let fitted = build(MethodKind::Calibrated, &params(None))
        .unwrap()
        .fit(&(&ds).into(), &all)
        .unwrap();
    assert_eq!(fitted.notes().len(), 5);
    assert!(
        fitted
            .notes()
            .iter()
            .all(|n| matches!(n, FitNote::Skipped { .. }))
    );
    let strict = AugmentParams {
        strict: true,
        ..params(None)
    };
    assert!(
        build(MethodKind::Calibrated, &strict)
            .unwrap()
            .fit(&(&ds).into(), &all)
            .is_err()
    );
    // Parameter checks.
    for bad in [
        AugmentParams {
            borrowed_classes: 0,
            ..params(None)
        },
        params(Some(0.0)),
        params(Some(f64::NAN)),
        AugmentParams {
            magnitude: Some(-1.0),
            ..params(None)
        },
    ] {
        assert!(matches!(
            build(MethodKind::Calibrated, &bad),
            Err(Error::Param { .. })
        ));
    }
}
