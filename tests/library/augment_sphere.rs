//! `--path sphere` for interpolate and extrapolate: spherical linear interpolation (Shoemake
//! 1985, "Animating rotation with quaternion curves", SIGGRAPH): slerp(x, n; t) =
//! sin((1 − t)θ)/sin θ · x + sin(tθ)/sin θ · n, θ the angle between x and n. The checks are
//! the definition's consequences: norm 1, angle |t|·θ from x, and the row rebuilt from its
//! provenance (parent, partner, weight) by the formula written out here.

use embloom::Dataset;
use embloom::augment::{AugmentParams, MethodKind, PairPath, Plan, build, grow};
use embloom::error::Error;
use embloom::seed;
use ndarray::Array2;
use rand::Rng;
use rand_distr::StandardNormal;

/// Unit-norm rows, `sizes[c]` of class c in `d` dimensions around a per-class direction (with
/// `scale` ≠ 1 the rows are that long instead).
fn sphere_blobs(sizes: &[usize], d: usize, scale: f64) -> Dataset {
    let mut rng = seed::stream(11, &[0]);
    let n: usize = sizes.iter().sum();
    let mut x = Array2::<f32>::zeros((n, d));
    let mut labels = Vec::with_capacity(n);
    let mut i = 0;
    for (c, &m) in sizes.iter().enumerate() {
        for _ in 0..m {
            let v: Vec<f64> = (0..d)
                .map(|j| {
                    let z: f64 = rng.sample(StandardNormal);
                    z + if j == c % d { 2.0 } else { 0.0 }
                })
                .collect();
            let norm = v.iter().map(|a| a * a).sum::<f64>().sqrt();
            for (j, vj) in v.iter().enumerate() {
                x[[i, j]] = (scale * vj / norm) as f32;
            }
            labels.push(c as u32);
            i += 1;
        }
    }
    Dataset::new(
        x,
        labels,
        (0..sizes.len()).map(|c| format!("c{c}")).collect(),
    )
}

fn row(ds: &Array2<f32>, i: usize) -> Vec<f64> {
    ds.row(i).iter().map(|&v| f64::from(v)).collect()
}

fn norm(a: &[f64]) -> f64 {
    a.iter().map(|v| v * v).sum::<f64>().sqrt()
}

/// The angle between `a` and `b` as 2·atan2(|â − b̂|, |â + b̂|), accurate at small angles
/// too (acos of the cosine loses half the digits there).
fn angle(a: &[f64], b: &[f64]) -> f64 {
    let (na, nb) = (norm(a), norm(b));
    let (mut diff, mut sum) = (0.0, 0.0);
    for (x, y) in a.iter().zip(b) {
        diff += (x / na - y / nb).powi(2);
        sum += (x / na + y / nb).powi(2);
    }
    2.0 * diff.sqrt().atan2(sum.sqrt())
}

/// Shoemake's slerp, written out from the formula.
fn slerp(x: &[f64], n: &[f64], t: f64) -> Vec<f64> {
    let (xu, nu): (Vec<f64>, Vec<f64>) = (
        x.iter().map(|v| v / norm(x)).collect(),
        n.iter().map(|v| v / norm(n)).collect(),
    );
    let th = angle(&xu, &nu);
    xu.iter()
        .zip(&nu)
        .map(|(a, b)| (((1.0 - t) * th).sin() * a + (t * th).sin() * b) / th.sin())
        .collect()
}

fn sphere_params(magnitude: Option<f32>) -> AugmentParams {
    AugmentParams {
        path: PairPath::Sphere,
        magnitude,
        ..AugmentParams::default()
    }
}

#[test]
fn interpolate_on_the_sphere_keeps_norm_one_at_angle_u_theta() {
    let ds = sphere_blobs(&[30, 60], 8, 1.0);
    let method = build(MethodKind::Interpolate, &sphere_params(None)).unwrap();
    let g = grow(
        &ds,
        method.as_ref(),
        &Plan { add: vec![400, 0] },
        false,
        3,
        &[1],
    )
    .unwrap();
    assert_eq!(g.x.nrows(), 400);
    for (i, p) in g.provenance.iter().enumerate() {
        let (s, x, n) = (
            row(&g.x, i),
            row(&ds.x, p.parent),
            row(&ds.x, p.partner.unwrap()),
        );
        let (u, th) = (f64::from(p.weight), angle(&x, &n));
        // Shoemake 1985: the slerp point has norm 1 and lies at angle u·θ from x and
        // (1 − u)·θ from n; f32 rows, so agreement to ~1e-6.
        assert!((norm(&s) - 1.0).abs() < 2e-6, "norm {}", norm(&s));
        assert!((angle(&s, &x) - u * th).abs() < 1e-3 * th.max(1e-3) + 2e-6);
        assert!((angle(&s, &n) - (1.0 - u) * th).abs() < 1e-3 * th.max(1e-3) + 2e-6);
        // Provenance rebuilds the row.
        for (a, b) in s.iter().zip(slerp(&x, &n, u)) {
            assert!((a - b).abs() < 2e-6, "{a} vs {b}");
        }
    }
}

#[test]
fn extrapolate_on_the_sphere_moves_lambda_theta_away_from_the_neighbour() {
    let ds = sphere_blobs(&[30, 60], 8, 1.0);
    let lambda = 0.5f32;
    let method = build(MethodKind::Extrapolate, &sphere_params(Some(lambda))).unwrap();
    let g = grow(
        &ds,
        method.as_ref(),
        &Plan { add: vec![300, 0] },
        false,
        4,
        &[1],
    )
    .unwrap();
    for (i, p) in g.provenance.iter().enumerate() {
        assert_eq!(p.weight, lambda);
        let (s, x, n) = (
            row(&g.x, i),
            row(&ds.x, p.parent),
            row(&ds.x, p.partner.unwrap()),
        );
        let th = angle(&x, &n);
        let l = f64::from(lambda);
        assert!((norm(&s) - 1.0).abs() < 2e-6);
        // slerp at t = −λ: angle λ·θ from x, (1 + λ)·θ from n (on the far side of x).
        assert!((angle(&s, &x) - l * th).abs() < 1e-3 * th.max(1e-3) + 2e-6);
        if (1.0 + l) * th < std::f64::consts::PI {
            assert!((angle(&s, &n) - (1.0 + l) * th).abs() < 1e-3 * th.max(1e-3) + 2e-6);
        }
        for (a, b) in s.iter().zip(slerp(&x, &n, -l)) {
            assert!((a - b).abs() < 2e-6, "{a} vs {b}");
        }
    }
}

#[test]
fn the_sphere_refuses_rows_off_it_unless_rows_are_renormalised() {
    let ds = sphere_blobs(&[20, 40], 6, 3.0);
    let plan = Plan { add: vec![50, 0] };
    for kind in [MethodKind::Interpolate, MethodKind::Extrapolate] {
        let method = build(kind, &sphere_params(None)).unwrap();
        match grow(&ds, method.as_ref(), &plan, false, 1, &[1]) {
            Err(Error::Param { name, detail, .. }) => {
                assert_eq!(name, "path");
                assert!(
                    detail.contains("training row 0 has norm 3.0000"),
                    "{detail}"
                );
            }
            other => panic!("{kind}: expected a path error, got {other:?}"),
        }
        // With renormalisation on, the rows follow the great circle between the directions.
        let g = grow(&ds, method.as_ref(), &plan, true, 1, &[1]).unwrap();
        for (i, p) in g.provenance.iter().enumerate() {
            let s = row(&g.x, i);
            assert!((norm(&s) - 1.0).abs() < 2e-6);
            let t = match kind {
                MethodKind::Interpolate => f64::from(p.weight),
                _ => -f64::from(p.weight),
            };
            let expect = slerp(&row(&ds.x, p.parent), &row(&ds.x, p.partner.unwrap()), t);
            for (a, b) in s.iter().zip(expect) {
                assert!((a - b).abs() < 2e-6);
            }
        }
    }
    // The chord path takes the same rows without complaint.
    let chord = build(MethodKind::Interpolate, &AugmentParams::default()).unwrap();
    assert!(grow(&ds, chord.as_ref(), &plan, false, 1, &[1]).is_ok());
}
