//! The linear probe with balanced class weights (what `reweight` fits) against scikit-learn's
//! LogisticRegression(class_weight="balanced"), from tests/reference/probe_reweight.py.

use std::path::Path;

use embloom::probe::{ClassWeight, LinearParams, LinearProbe, class_weights};
use ndarray::Array2;

fn fixture() -> serde_json::Value {
    let path =
        Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/probe/reweight_expected.json");
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

fn matrix(v: &serde_json::Value) -> Array2<f64> {
    let rows: Vec<Vec<f64>> = v
        .as_array()
        .unwrap()
        .iter()
        .map(|r| {
            r.as_array()
                .unwrap()
                .iter()
                .map(|x| x.as_f64().unwrap())
                .collect()
        })
        .collect();
    let (n, d) = (rows.len(), rows[0].len());
    Array2::from_shape_vec((n, d), rows.into_iter().flatten().collect()).unwrap()
}

#[test]
fn balanced_linear_probe_matches_scikit_learn() {
    // Reference: tests/reference/probe_reweight.py (scikit-learn class_weight="balanced",
    // C = 1/(λ n)); the probe's objective Σ wᵢℓᵢ/n + λ/2‖W‖² is scikit-learn's divided by n.
    let fx = fixture();
    let x = matrix(&fx["x"]).mapv(|v| v as f32);
    let y: Vec<u32> = fx["y"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_u64().unwrap() as u32)
        .collect();
    let weights = class_weights(&y, 3, ClassWeight::Balanced);
    for (w, e) in weights.iter().zip(fx["class_weights"].as_array().unwrap()) {
        assert!((w - e.as_f64().unwrap()).abs() < 1e-12, "{weights:?}");
    }
    let model = LinearProbe::new(LinearParams {
        l2: fx["l2"].as_f64().unwrap(),
        standardize: false,
        class_weight: ClassWeight::Balanced,
        tol: 1e-9,
        max_iter: 5000,
    })
    .unwrap()
    .fit(x.view(), &y, 3, None)
    .unwrap();
    assert!(model.converged, "{model:?}");
    // The same optimum: objective value, coefficients, intercepts (both fits start at zero, and
    // the bias gradient sums to zero over classes, so both keep Σ b = 0), probabilities.
    let objective = fx["objective"].as_f64().unwrap();
    assert!(
        (model.final_loss - objective).abs() < 1e-7 * objective,
        "{} vs {objective}",
        model.final_loss
    );
    let coef = matrix(&fx["coef"]);
    let diff = (&model.weights() - &coef).mapv(f64::abs);
    let worst = diff.iter().cloned().fold(0.0, f64::max);
    assert!(worst < 1e-4, "largest coefficient difference {worst}");
    for (b, e) in model.bias().iter().zip(fx["intercept"].as_array().unwrap()) {
        assert!((b - e.as_f64().unwrap()).abs() < 1e-4, "{b} vs {e}");
    }
    let proba = model.predict_proba(x.view());
    let expected = matrix(&fx["proba"]);
    let worst = (&proba - &expected)
        .mapv(f64::abs)
        .iter()
        .cloned()
        .fold(0.0, f64::max);
    assert!(worst < 1e-5, "largest probability difference {worst}");
}
