//! Class diagnostics and PRDC against a numpy transcription of the definitions
//! (tests/reference/eval_prdc.py; PRDC per Naeem et al. 2020, eqs. 3–6).

use embloom::eval::{TrainingRows, class_diagnostics, prdc};
use embloom::neighbors::Metric;
use ndarray::Array2;
use serde_json::Value;

use crate::common::json_matrix as matrix;

fn fixture() -> Value {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fixtures/eval/prdc.json");
    serde_json::from_str(&std::fs::read_to_string(path).expect("fixture")).expect("json")
}

fn labels(v: &Value) -> Vec<u32> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_u64().unwrap() as u32)
        .collect()
}

/// `expected` null means NaN.
fn same(got: f64, expected: &Value, tol: f64) -> bool {
    match expected.as_f64() {
        None => got.is_nan(),
        Some(e) => (got - e).abs() <= tol,
    }
}

#[test]
fn prdc_matches_numpy_transcription() {
    let f = &fixture()["prdc"];
    let p = prdc(
        matrix(&f["real"]).view(),
        matrix(&f["fake"]).view(),
        Metric::Euclidean,
    );
    // Naeem et al. 2020 eqs. 3–6, numpy transcription in tests/reference/eval_prdc.py.
    assert_eq!(p.k, 5);
    assert!(
        same(p.precision, &f["precision"], 1e-9),
        "precision {}",
        p.precision
    );
    assert!(same(p.recall, &f["recall"], 1e-9), "recall {}", p.recall);
    assert!(
        same(p.density, &f["density"], 1e-9),
        "density {}",
        p.density
    );
    assert!(
        same(p.coverage, &f["coverage"], 1e-9),
        "coverage {}",
        p.coverage
    );
}

#[test]
fn class_diagnostics_match_numpy_transcription() {
    let f = &fixture()["diagnostics"];
    let (train_x, train_y) = (matrix(&f["train_x"]), labels(&f["train_y"]));
    let train = TrainingRows::new(train_x.view(), &train_y, Metric::Euclidean);
    let got = class_diagnostics(
        &train,
        matrix(&f["synth_x"]).view(),
        &labels(&f["synth_y"]),
        matrix(&f["test_x"]).view(),
        &labels(&f["test_y"]),
        &labels(&f["classes"]),
    );
    let expected = f["expected"].as_array().unwrap();
    assert_eq!(got.len(), expected.len());
    for (g, e) in got.iter().zip(expected) {
        // numpy transcription of the ClassDiagnostics definitions and of Naeem et al. 2020,
        // tests/reference/eval_prdc.py. Shares are ratios of counts, so they match to 1e-9;
        // the distance ratio is a ratio of f32 distances, hence 1e-5 relative.
        assert_eq!(u64::from(g.class), e["class"].as_u64().unwrap());
        assert_eq!(g.synthetic as u64, e["synthetic"].as_u64().unwrap());
        assert_eq!(
            g.prdc_k as u64,
            e["k"].as_u64().unwrap(),
            "k of class {}",
            g.class
        );
        assert!(
            same(g.intrusion_synthetic, &e["intrusion_synthetic"], 1e-9),
            "{g:?}"
        );
        assert!(same(g.intrusion_real, &e["intrusion_real"], 1e-9), "{g:?}");
        let ratio_tol = e["distance_ratio"].as_f64().map_or(0.0, |r| 1e-5 * r);
        assert!(
            same(g.distance_ratio, &e["distance_ratio"], ratio_tol),
            "{g:?}"
        );
        assert!(same(g.precision, &e["precision"], 1e-9), "{g:?}");
        assert!(same(g.recall, &e["recall"], 1e-9), "{g:?}");
        assert!(same(g.density, &e["density"], 1e-9), "{g:?}");
        assert!(same(g.coverage, &e["coverage"], 1e-9), "{g:?}");
    }
}

#[test]
fn identical_sets_score_perfectly() {
    // From the definitions (Naeem et al. 2020): when fake = real, every row lies in its own
    // ball, so precision = recall = coverage = 1; each real ball holds its centre and its k
    // nearest others, so density ≥ (1/kM)·M·(k + 1) = (k + 1)/k.
    let x = Array2::from_shape_fn((12, 3), |(i, j)| {
        ((i * 7 + j * 3) % 11) as f32 + 0.1 * i as f32
    });
    let p = prdc(x.view(), x.view(), Metric::Euclidean);
    assert_eq!((p.precision, p.recall, p.coverage), (1.0, 1.0, 1.0));
    assert!(p.density >= 6.0 / 5.0 - 1e-12);
    // Too few rows for any k: NaN figures and k = 0 (embloom's documented convention).
    let one = prdc(x.slice(ndarray::s![..1, ..]), x.view(), Metric::Euclidean);
    assert_eq!(one.k, 0);
    assert!(one.precision.is_nan() && one.density.is_nan());
}

#[test]
fn prdc_below_k_2_is_not_available_and_says_its_k() {
    // Two held-out rows give k = min(5, 2 − 1) = 1: a one-neighbour ball says nothing, so the
    // figures are not available rather than 0 (embloom's documented convention).
    let real = Array2::from_shape_fn((2, 3), |(i, j)| (i * 3 + j) as f32);
    let fake = Array2::from_shape_fn((6, 3), |(i, j)| (i + j) as f32 * 0.5);
    let p = prdc(real.view(), fake.view(), Metric::Euclidean);
    assert_eq!(p.k, 1);
    assert!(p.precision.is_nan() && p.recall.is_nan() && p.coverage.is_nan());
}

#[test]
fn cosine_distance_ratio_is_taken_in_angles() {
    // From the definition: class 0's real rows lie 0.3 rad apart on the unit circle and its
    // synthetic rows 0.15 rad from the nearest real row, so the ratio in angles is 0.5; in
    // 1 − cos it would be about 0.25.
    let at = |a: f32| [a.cos(), a.sin()];
    let rows = |angles: &[f32]| Array2::from_shape_fn((angles.len(), 2), |(i, j)| at(angles[i])[j]);
    let train_x = rows(&[0.0, 0.3, 0.6, 0.9, 3.0, 3.3]);
    let train_y = vec![0, 0, 0, 0, 1, 1];
    let synth_x = rows(&[0.15, 0.45, 0.75]);
    let synth_y = vec![0, 0, 0];
    let test_x = rows(&[0.1, 0.2, 0.5, 0.7]);
    let test_y = vec![0, 0, 0, 0];
    let train = TrainingRows::new(train_x.view(), &train_y, Metric::Cosine);
    let got = class_diagnostics(
        &train,
        synth_x.view(),
        &synth_y,
        test_x.view(),
        &test_y,
        &[0],
    );
    assert!((got[0].distance_ratio - 0.5).abs() < 1e-3, "{:?}", got[0]);
}

#[test]
fn training_rows_for_some_classes_give_the_same_figures_as_for_all() {
    // Definition, no source: `for_classes` finds each asked-for row's nearest other row by
    // searching its two nearest and dropping itself; that must equal the all-rows search,
    // exact copies included (rows 0, 1 and 3 are one point: ties go to the lower index).
    let train_x = Array2::from_shape_vec(
        (7, 2),
        vec![
            0.0, 0.0, 0.0, 0.0, 1.0, 0.0, 0.0, 0.0, 0.2, 0.1, 3.0, 3.0, 2.9, 3.2,
        ],
    )
    .unwrap();
    let train_y = vec![0, 1, 0, 1, 1, 2, 2];
    let synth_x = Array2::from_shape_vec((3, 2), vec![0.1, 0.0, 0.05, 0.05, 3.0, 3.1]).unwrap();
    let synth_y = vec![1, 1, 2];
    let test_x = Array2::from_shape_vec((3, 2), vec![0.1, 0.1, 0.0, 0.1, 2.8, 3.0]).unwrap();
    let test_y = vec![1, 1, 2];
    for metric in [Metric::Euclidean, Metric::Cosine] {
        let all = TrainingRows::new(train_x.view(), &train_y, metric);
        let some = TrainingRows::for_classes(train_x.view(), &train_y, metric, &[1, 2]);
        let run = |t: &TrainingRows| {
            format!(
                "{:?}",
                class_diagnostics(t, synth_x.view(), &synth_y, test_x.view(), &test_y, &[1, 2])
            )
        };
        assert_eq!(run(&all), run(&some), "{metric:?}");
    }
}
