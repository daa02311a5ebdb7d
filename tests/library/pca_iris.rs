//! PCA against numpy's SVD (tests/reference/pca_iris.py writes the fixtures).

use std::path::PathBuf;

use embloom::pca::Pca;
use ndarray::Array2;

fn fixture(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/pca")
        .join(name)
}

fn read_csv(name: &str) -> Array2<f32> {
    let text = std::fs::read_to_string(fixture(name)).expect("fixture csv");
    let rows: Vec<Vec<f32>> = text
        .lines()
        .filter(|l| !l.trim().is_empty())
        .map(|l| {
            l.split(',')
                .map(|v| v.trim().parse().expect("number"))
                .collect()
        })
        .collect();
    let d = rows[0].len();
    Array2::from_shape_vec((rows.len(), d), rows.into_iter().flatten().collect()).unwrap()
}

struct Reference {
    components: Vec<Vec<f64>>,
    variance: Vec<f64>,
    ratio: Vec<f64>,
}

fn read_json(name: &str) -> Reference {
    let text = std::fs::read_to_string(fixture(name)).expect("fixture json");
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    let vec = |x: &serde_json::Value| -> Vec<f64> {
        x.as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect()
    };
    Reference {
        components: v["components"]
            .as_array()
            .unwrap()
            .iter()
            .map(vec)
            .collect(),
        variance: vec(&v["explained_variance"]),
        ratio: vec(&v["explained_variance_ratio"]),
    }
}

/// Compares a fit with the reference: directions up to sign, ratios to 1e-4, variances to
/// 1e-4 relative.
fn check(pca: &Pca, r: &Reference) {
    assert_eq!(
        pca.components.nrows(),
        r.components.len(),
        "component count"
    );
    for (i, want) in r.components.iter().enumerate() {
        let got = pca.components.row(i);
        let dot: f64 = got.iter().zip(want).map(|(a, b)| a * b).sum();
        let sign = dot.signum();
        for (a, b) in got.iter().zip(want) {
            assert!(
                (a - sign * b).abs() < 1e-4,
                "component {i}: {a} vs {}",
                sign * b
            );
        }
        let rv = pca.explained_variance[i];
        assert!(
            (rv - r.variance[i]).abs() <= 1e-4 * r.variance[i],
            "variance {i}"
        );
        assert!(
            (pca.explained_variance_ratio[i] - r.ratio[i]).abs() < 1e-4,
            "ratio {i}"
        );
    }
}

#[test]
fn iris_covariance_path_matches_numpy_svd() {
    // Source: scikit-learn's bundled iris, PCA by numpy.linalg.svd in tests/reference/pca_iris.py.
    let x = read_csv("iris.csv");
    assert_eq!(x.dim(), (150, 4));
    let pca = Pca::fit(x.view()).unwrap();
    check(&pca, &read_json("iris.json"));
    // Source: same script; iris's first component carries ≈ 92.5% of the variance, so one
    // component reaches 90% and two reach 95%.
    assert_eq!(pca.components_for(0.90), 1);
    assert_eq!(pca.components_for(0.95), 2);
}

#[test]
fn wide_gram_path_matches_numpy_svd() {
    // Source: numpy default_rng(20240611) 20 × 50 normal rows, PCA by numpy.linalg.svd in
    // tests/reference/pca_iris.py. n < d, so the Gram matrix is decomposed.
    let x = read_csv("wide.csv");
    assert_eq!(x.dim(), (20, 50));
    let pca = Pca::fit(x.view()).unwrap();
    check(&pca, &read_json("wide.json"));
    // Common practice, no source: the directions are orthonormal.
    let g = pca.components.dot(&pca.components.t());
    for i in 0..g.nrows() {
        for j in 0..g.ncols() {
            let want = if i == j { 1.0 } else { 0.0 };
            assert!((g[[i, j]] - want).abs() < 1e-9);
        }
    }
}

#[test]
fn transform_projects_centred_rows() {
    // Common practice, no source: projections onto all components preserve centred squared
    // norms, and their per-column variance equals the explained variance.
    let x = read_csv("iris.csv");
    let pca = Pca::fit(x.view()).unwrap();
    let z = pca.transform(x.view(), 10);
    assert_eq!(z.ncols(), 4);
    for j in 0..4 {
        let col = z.column(j);
        let m: f64 = col.iter().map(|&v| v as f64).sum::<f64>() / 150.0;
        let var: f64 = col.iter().map(|&v| (v as f64 - m).powi(2)).sum::<f64>() / 149.0;
        assert!(m.abs() < 1e-5);
        assert!((var - pca.explained_variance[j]).abs() < 1e-4 * pca.explained_variance[j]);
    }
    assert_eq!(pca.transform(x.view(), 2).ncols(), 2);
}

#[test]
fn degenerate_inputs() {
    // Common practice, no source: fewer than two rows is an error, identical rows have no
    // direction, and a rank-1 set keeps exactly one.
    assert!(Pca::fit(Array2::<f32>::zeros((1, 3)).view()).is_err());
    assert!(Pca::fit(Array2::<f32>::zeros((0, 3)).view()).is_err());
    let same = Array2::from_elem((5, 3), 2.0f32);
    assert_eq!(Pca::fit(same.view()).unwrap().n_components(), 0);
    let line = Array2::from_shape_fn((6, 3), |(i, j)| (i as f32) * [1.0, 2.0, -2.0][j]);
    let pca = Pca::fit(line.view()).unwrap();
    assert_eq!(pca.n_components(), 1);
    assert!((pca.explained_variance_ratio[0] - 1.0).abs() < 1e-12);
    let mut bad = Array2::<f32>::zeros((3, 2));
    bad[[1, 1]] = f32::NAN;
    assert!(Pca::fit(bad.view()).is_err());
}
