//! The four feature-space methods, the `none` baseline and the grow driver, checked against the
//! methods' published definitions (sources beside each check).

use embloom::Dataset;
use embloom::augment::{AugmentParams, FitNote, MethodKind, Plan, build, grow};
use embloom::error::Error;
use embloom::neighbors::Metric;
use embloom::seed;
use ndarray::Array2;
use rand::Rng;
use rand_distr::StandardNormal;

/// A dataset with `sizes[c]` rows of class c in `d` dimensions, class centres apart, drawn from
/// a seeded stream (the values themselves are arbitrary; only the rules are checked).
fn blobs(sizes: &[usize], d: usize, seed_: u64) -> Dataset {
    let mut rng = seed::stream(seed_, &[0]);
    let n: usize = sizes.iter().sum();
    let mut x = Array2::<f32>::zeros((n, d));
    let mut labels = Vec::with_capacity(n);
    let mut i = 0;
    for (c, &m) in sizes.iter().enumerate() {
        for _ in 0..m {
            for j in 0..d {
                let z: f64 = rng.sample(StandardNormal);
                x[[i, j]] = (z + if j == c % d { 4.0 } else { 0.0 }) as f32;
            }
            labels.push(c as u32);
            i += 1;
        }
    }
    let classes = (0..sizes.len()).map(|c| format!("class{c}")).collect();
    Dataset::new(x, labels, classes)
}

fn params(k: usize, magnitude: Option<f32>) -> AugmentParams {
    AugmentParams {
        neighbours: k,
        magnitude,
        ..AugmentParams::default()
    }
}

fn dist(a: &[f64], b: &[f64]) -> f64 {
    a.iter()
        .zip(b)
        .map(|(x, y)| (x - y).powi(2))
        .sum::<f64>()
        .sqrt()
}

fn row64(ds: &Dataset, i: usize) -> Vec<f64> {
    ds.x.row(i).iter().map(|&v| f64::from(v)).collect()
}

/// Brute force in f64: is `partner` among the `k` nearest other rows of `parent`'s class?
/// (Ties at the k-th distance count as "among", with a relative slack for f32 distances.)
fn among_k_nearest(ds: &Dataset, parent: usize, partner: usize, k: usize) -> bool {
    among_k_nearest_by(ds, parent, partner, k, dist)
}

fn among_k_nearest_by(
    ds: &Dataset,
    parent: usize,
    partner: usize,
    k: usize,
    metric: fn(&[f64], &[f64]) -> f64,
) -> bool {
    let c = ds.labels[parent];
    let p = row64(ds, parent);
    let mut d: Vec<f64> = ds
        .rows_of_class(c)
        .into_iter()
        .filter(|&i| i != parent)
        .map(|i| metric(&p, &row64(ds, i)))
        .collect();
    d.sort_by(f64::total_cmp);
    let kth = d[k.min(d.len()) - 1];
    ds.labels[partner] == c
        && partner != parent
        && metric(&p, &row64(ds, partner)) <= kth * (1.0 + 1e-5) + 1e-6
}

/// 1 − cos(a, b), in f64.
fn cosine_dist(a: &[f64], b: &[f64]) -> f64 {
    let dot: f64 = a.iter().zip(b).map(|(x, y)| x * y).sum();
    let na = a.iter().map(|x| x * x).sum::<f64>().sqrt();
    let nb = b.iter().map(|x| x * x).sum::<f64>().sqrt();
    1.0 - dot / (na * nb)
}

/// Sample covariance (n − 1) of rows in f64.
fn covariance(rows: &[Vec<f64>]) -> Vec<Vec<f64>> {
    let n = rows.len() as f64;
    let d = rows[0].len();
    let mean: Vec<f64> = (0..d)
        .map(|j| rows.iter().map(|r| r[j]).sum::<f64>() / n)
        .collect();
    let mut c = vec![vec![0.0; d]; d];
    for r in rows {
        for a in 0..d {
            for b in 0..d {
                c[a][b] += (r[a] - mean[a]) * (r[b] - mean[b]);
            }
        }
    }
    c.iter_mut()
        .for_each(|row| row.iter_mut().for_each(|v| *v /= n - 1.0));
    c
}

#[test]
fn interpolate_rows_lie_between_parent_and_a_true_neighbour() {
    let ds = blobs(&[60, 30, 15], 8, 1);
    let k = 5;
    let method = build(MethodKind::Interpolate, &params(k, None)).unwrap();
    let plan = Plan {
        add: vec![0, 40, 50],
    };
    let g = grow(&ds, method.as_ref(), &plan, false, 11, &[3]).unwrap();
    assert_eq!(g.x.nrows(), 90);
    assert!(g.notes.is_empty());
    for (i, p) in g.provenance.iter().enumerate() {
        let partner = p.partner.unwrap();
        let u = f64::from(p.weight);
        // SMOTE (Chawla et al. 2002): u ~ U(0,1), the row is x + u·(n − x).
        assert!((0.0..=1.0).contains(&u));
        let (x, n) = (row64(&ds, p.parent), row64(&ds, partner));
        let expect: Vec<f64> = x.iter().zip(&n).map(|(a, b)| a + u * (b - a)).collect();
        let got: Vec<f64> = g.x.row(i).iter().map(|&v| f64::from(v)).collect();
        // f32 arithmetic on values of size ~5: a few ulps (~1e-6) per coordinate.
        assert!(dist(&got, &expect) < 1e-5, "row {i} is off the segment");
        // The partner is one of the parent's K nearest same-class neighbours (Chawla et al. 2002).
        assert!(
            among_k_nearest(&ds, p.parent, partner, k),
            "row {i}: partner not among K nearest"
        );
        assert_eq!(ds.labels[p.parent], g.labels[i]);
    }
    assert_eq!(&g.labels[..40], &[1; 40]);
}

#[test]
fn extrapolate_pushes_away_from_the_neighbour() {
    let ds = blobs(&[20, 25], 6, 2);
    let (k, lambda) = (3, 0.7f32);
    let method = build(MethodKind::Extrapolate, &params(k, Some(lambda))).unwrap();
    let g = grow(
        &ds,
        method.as_ref(),
        &Plan { add: vec![30, 10] },
        false,
        5,
        &[],
    )
    .unwrap();
    assert!(!g.renormalised);
    for (i, p) in g.provenance.iter().enumerate() {
        let partner = p.partner.unwrap();
        assert_eq!(p.weight, lambda);
        // DeVries & Taylor 2017: x' = x + λ·(x − n), n a same-class neighbour.
        for j in 0..ds.dims() {
            let (x, n) = (ds.x[[p.parent, j]], ds.x[[partner, j]]);
            let expect = f64::from(x) + f64::from(lambda) * (f64::from(x) - f64::from(n));
            // f32 rounding of x + λ(x − n) with |values| < 20: well under 1e-5.
            assert!((f64::from(g.x[[i, j]]) - expect).abs() < 1e-5);
        }
        assert!(among_k_nearest(&ds, p.parent, partner, k));
    }
}

#[test]
fn principal_noise_offsets_follow_the_kept_class_covariance() {
    // Fixture: numpy.cov + numpy.linalg.eigh, by tests/reference/principal_noise_cov.py.
    let text = std::fs::read_to_string("tests/fixtures/augment/principal_noise_cov.json").unwrap();
    let fx: serde_json::Value = serde_json::from_str(&text).unwrap();
    let rows: Vec<Vec<f32>> = serde_json::from_value(fx["rows"].clone()).unwrap();
    let expect: Vec<Vec<f64>> = serde_json::from_value(fx["restricted_cov"].clone()).unwrap();
    let dropped: Vec<Vec<f64>> =
        serde_json::from_value(fx["discarded_directions"].clone()).unwrap();
    let variance_kept = fx["variance_kept"].as_f64().unwrap();
    let d = rows[0].len();
    // Class 0: the fixture rows; class 1: a few far rows that must not influence class 0.
    let mut flat: Vec<f32> = rows.iter().flatten().copied().collect();
    flat.extend((0..10 * d).map(|i| 50.0 + (i % 7) as f32));
    let n0 = rows.len();
    let labels: Vec<u32> = (0..n0 + 10).map(|i| u32::from(i >= n0)).collect();
    let ds = Dataset::new(
        Array2::from_shape_vec((n0 + 10, d), flat).unwrap(),
        labels,
        vec!["a".into(), "b".into()],
    );

    let magnitude = 0.5f32;
    let p = AugmentParams {
        magnitude: Some(magnitude),
        variance_kept,
        ..AugmentParams::default()
    };
    let fitted = build(MethodKind::PrincipalNoise, &p)
        .unwrap()
        .fit(&(&ds).into(), &[0])
        .unwrap();
    let n = 40_000;
    let s = fitted.sample(0, n, &mut seed::stream(9, &[1])).unwrap();
    let offsets: Vec<Vec<f64>> = s
        .provenance
        .iter()
        .enumerate()
        .map(|(i, pr)| {
            assert!(pr.parent < n0 && pr.partner.is_none() && pr.weight == magnitude);
            (0..d)
                .map(|j| f64::from(s.x[[i, j]]) - f64::from(ds.x[[pr.parent, j]]))
                .collect()
        })
        .collect();
    let got = covariance(&offsets);
    // Definition of principal-noise (Gaussian noise along the class's principal directions, each scaled by that direction's standard deviation times the magnitude): offsets ~ N(0, m²·V_k diag(s²) V_kᵀ).
    // Monte-Carlo standard error of a sample covariance entry of N Gaussian draws is
    // sqrt((Σ_ii Σ_jj + Σ_ij²) / N); allow 5 standard errors (25 entries, so a false alarm
    // is very unlikely, while a wrong scale, e.g. variance instead of sd, is far outside).
    let m2 = f64::from(magnitude).powi(2);
    let mut worst = 0.0f64;
    for a in 0..d {
        for b in 0..d {
            let (sa, sb, sab) = (m2 * expect[a][a], m2 * expect[b][b], m2 * expect[a][b]);
            let se = ((sa * sb + sab * sab) / n as f64).sqrt();
            worst = worst.max((got[a][b] - sab).abs() / se);
            assert!(
                (got[a][b] - sab).abs() < 5.0 * se + 1e-9,
                "cov[{a}][{b}] = {} vs {sab} (se {se})",
                got[a][b]
            );
        }
    }
    eprintln!("principal-noise: worst covariance entry {worst:.2} standard errors off");
    // Nothing moves along the discarded directions (only f32 rounding, ~1e-6 per coordinate).
    for v in &dropped {
        let var = offsets
            .iter()
            .map(|o| o.iter().zip(v).map(|(a, b)| a * b).sum::<f64>().powi(2))
            .sum::<f64>()
            / n as f64;
        eprintln!("principal-noise: variance {var:.1e} along a discarded direction");
        assert!(var < 1e-10, "variance {var} along a discarded direction");
    }
}

#[test]
fn gaussian_noise_offsets_have_the_class_spread() {
    let ds = blobs(&[50, 200], 4, 3);
    let magnitude = 0.8f32;
    let fitted = build(MethodKind::GaussianNoise, &params(5, Some(magnitude)))
        .unwrap()
        .fit(&(&ds).into(), &[1])
        .unwrap();
    let n = 40_000;
    let s = fitted.sample(1, n, &mut seed::stream(4, &[])).unwrap();
    // σ: mean over dimensions of the class's per-dimension sd (n − 1), computed here in f64.
    let class_rows: Vec<Vec<f64>> = ds
        .rows_of_class(1)
        .into_iter()
        .map(|i| row64(&ds, i))
        .collect();
    let c = covariance(&class_rows);
    let sigma = (0..4).map(|j| c[j][j].sqrt()).sum::<f64>() / 4.0;
    let target = (f64::from(magnitude) * sigma).powi(2);
    let offsets: Vec<Vec<f64>> = s
        .provenance
        .iter()
        .enumerate()
        .map(|(i, p)| {
            assert_eq!(ds.labels[p.parent], 1);
            (0..4)
                .map(|j| f64::from(s.x[[i, j]]) - f64::from(ds.x[[p.parent, j]]))
                .collect()
        })
        .collect();
    let got = covariance(&offsets);
    // Definition of gaussian-noise (isotropic, scale magnitude·σ): Var = (mσ)², Cov = 0.
    // Monte-Carlo se of a variance is sqrt(2/N)·Var, of a zero covariance Var/sqrt(N); 5 se.
    let mut worst = 0.0f64;
    for (a, row) in got.iter().enumerate() {
        for (b, &g) in row.iter().enumerate() {
            let want = if a == b { target } else { 0.0 };
            let se = if a == b {
                (2.0 / n as f64).sqrt() * target
            } else {
                target / (n as f64).sqrt()
            };
            worst = worst.max((g - want).abs() / se);
            assert!((g - want).abs() < 5.0 * se, "cov[{a}][{b}] = {g} vs {want}");
        }
    }
    eprintln!("gaussian-noise: worst covariance entry {worst:.2} standard errors off");
}

#[test]
fn same_seed_same_rows_for_any_thread_count() {
    let ds = blobs(&[40, 12, 9, 30], 6, 5);
    let plan = Plan {
        add: vec![0, 28, 31, 10],
    };
    for kind in [
        MethodKind::Interpolate,
        MethodKind::Extrapolate,
        MethodKind::PrincipalNoise,
        MethodKind::GaussianNoise,
    ] {
        let method = build(kind, &AugmentParams::default()).unwrap();
        let run = |threads: usize, seed_: u64| {
            let pool = rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .unwrap();
            pool.install(|| grow(&ds, method.as_ref(), &plan, false, seed_, &[2, 7]).unwrap())
        };
        let (a, b, c) = (run(1, 42), run(2, 42), run(2, 42));
        // common practice, no source: reproducible from the seed alone, whatever the scheduling.
        assert_eq!(a.x, b.x, "{kind}: 1 vs 2 threads");
        assert_eq!(a.provenance, b.provenance);
        assert_eq!(b.x, c.x);
        assert_eq!(a.labels, b.labels);
        let other = run(2, 43);
        assert_ne!(a.x, other.x, "{kind}: another seed gave the same rows");
    }
}

#[test]
fn tiny_classes_are_skipped_clamped_or_refused() {
    // Class 1 has a single row, class 2 three rows (so K = 5 must shrink to 2).
    let ds = blobs(&[20, 1, 3], 4, 6);
    let plan = Plan { add: vec![0, 5, 5] };
    for kind in [
        MethodKind::Interpolate,
        MethodKind::Extrapolate,
        MethodKind::PrincipalNoise,
        MethodKind::GaussianNoise,
    ] {
        let method = build(kind, &params(5, None)).unwrap();
        let g = grow(&ds, method.as_ref(), &plan, false, 1, &[]).unwrap();
        // common practice, no source: one row has no neighbour, covariance or spread.
        assert!(
            matches!(&g.notes[0], FitNote::Skipped { class: 1, .. }),
            "{kind}: {:?}",
            g.notes
        );
        if kind.uses_neighbours() {
            assert_eq!(g.notes[1], FitNote::Clamped { class: 2, k: 2 });
        }
        assert_eq!(
            g.labels,
            vec![2; 5],
            "{kind}: the skipped class must add no rows"
        );

        let strict = AugmentParams {
            strict: true,
            ..params(5, None)
        };
        let err = grow(
            &ds,
            build(kind, &strict).unwrap().as_ref(),
            &plan,
            false,
            1,
            &[],
        )
        .unwrap_err();
        assert!(matches!(err, Error::Data { .. }), "{kind}: {err}");
        assert!(err.to_string().contains("'class1'"), "{kind}: {err}");
    }
    // K exactly size − 1 needs no clamping.
    let g = grow(
        &ds,
        build(MethodKind::Interpolate, &params(2, None))
            .unwrap()
            .as_ref(),
        &Plan { add: vec![0, 0, 4] },
        false,
        1,
        &[],
    )
    .unwrap();
    assert!(g.notes.is_empty());
    // Only planned classes are fitted: the one-row class 1 is not grown here, so even strict
    // mode has nothing to refuse.
    let strict = AugmentParams {
        strict: true,
        ..params(2, None)
    };
    let g = grow(
        &ds,
        build(MethodKind::Extrapolate, &strict).unwrap().as_ref(),
        &Plan { add: vec![3, 0, 4] },
        false,
        1,
        &[],
    )
    .unwrap();
    assert!(g.notes.is_empty());
    assert_eq!(g.labels, [0, 0, 0, 2, 2, 2, 2]);
}

#[test]
fn unit_norm_renormalises_and_leaves_zero_rows() {
    // Class 0 holds a zero row and a unit row; magnitude 0 copies parents exactly.
    let x = Array2::from_shape_vec((3, 2), vec![0.0, 0.0, 0.6, 0.8, 1.0, 0.0]).unwrap();
    let ds = Dataset::new(x, vec![0, 0, 1], vec!["a".into(), "b".into()]);
    let method = build(MethodKind::GaussianNoise, &params(1, Some(0.0))).unwrap();
    let g = grow(
        &ds,
        method.as_ref(),
        &Plan { add: vec![50, 0] },
        true,
        3,
        &[],
    )
    .unwrap();
    assert!(g.renormalised);
    let zero = g.provenance.iter().filter(|p| p.parent == 0).count();
    assert!(zero > 0 && zero < 50);
    for (row, p) in g.x.rows().into_iter().zip(&g.provenance) {
        let norm = row
            .iter()
            .map(|&v| f64::from(v).powi(2))
            .sum::<f64>()
            .sqrt();
        // common practice, no source: a zero vector has no direction and stays zero.
        if p.parent == 0 {
            assert_eq!(norm, 0.0)
        } else {
            assert!((norm - 1.0).abs() < 1e-6)
        }
    }

    // Interpolating unit vectors shortens them; renormalisation restores norm 1.
    let ds = blobs(&[30], 5, 8);
    let mut unit = ds.clone();
    for mut r in unit.x.rows_mut() {
        let n = r.iter().map(|v| v * v).sum::<f32>().sqrt();
        r.mapv_inplace(|v| v / n);
    }
    let g = grow(
        &unit,
        build(MethodKind::Interpolate, &params(5, None))
            .unwrap()
            .as_ref(),
        &Plan { add: vec![100] },
        true,
        3,
        &[],
    )
    .unwrap();
    for r in g.x.rows() {
        let n = r.iter().map(|&v| f64::from(v).powi(2)).sum::<f64>().sqrt();
        assert!((n - 1.0).abs() < 1e-6);
    }
}

#[test]
fn parameters_are_validated() {
    let bad =
        |kind: MethodKind, p: AugmentParams| matches!(build(kind, &p), Err(Error::Param { .. }));
    let base = AugmentParams::default();
    assert!(bad(
        MethodKind::Interpolate,
        AugmentParams {
            neighbours: 0,
            ..base.clone()
        }
    ));
    assert!(bad(
        MethodKind::Extrapolate,
        AugmentParams {
            neighbours: 0,
            ..base.clone()
        }
    ));
    assert!(bad(
        MethodKind::Extrapolate,
        AugmentParams {
            magnitude: Some(0.0),
            ..base.clone()
        }
    ));
    assert!(bad(
        MethodKind::GaussianNoise,
        AugmentParams {
            magnitude: Some(-0.1),
            ..base.clone()
        }
    ));
    assert!(bad(
        MethodKind::GaussianNoise,
        AugmentParams {
            magnitude: Some(f32::NAN),
            ..base.clone()
        }
    ));
    assert!(bad(
        MethodKind::PrincipalNoise,
        AugmentParams {
            magnitude: Some(f32::INFINITY),
            ..base.clone()
        }
    ));
    for v in [0.0, -0.5, 1.5, f64::NAN] {
        assert!(bad(
            MethodKind::PrincipalNoise,
            AugmentParams {
                variance_kept: v,
                ..base.clone()
            }
        ));
    }
    // Valid edges: variance_kept = 1, magnitude 0 for the noise methods.
    assert!(
        build(
            MethodKind::PrincipalNoise,
            &AugmentParams {
                variance_kept: 1.0,
                magnitude: Some(0.0),
                ..base.clone()
            }
        )
        .is_ok()
    );
    let err = build(
        MethodKind::Interpolate,
        &AugmentParams {
            neighbours: 0,
            ..base.clone()
        },
    )
    .err()
    .unwrap();
    assert!(err.to_string().contains("fix:"));
    for kind in MethodKind::ALL {
        let m = build(kind, &base).unwrap();
        assert_eq!(m.kind(), kind);
    }
}

/// Each method's own params follow linfa's `ParamGuard`: only checked params configure a
/// method, and a failed check names the parameter, never a command-line flag.
#[test]
fn method_params_are_checked_before_use() {
    use embloom::augment::{
        ExtrapolateParams, GaussianNoiseParams, InterpolateParams, MethodParams, NeighbourParams,
        Param, ParamGuard, PrincipalNoiseParams,
    };
    let name_of = |e: Error| match e {
        Error::Param { name, .. } => name,
        other => panic!("not a parameter error: {other}"),
    };
    // Defaults are the methods' documented ones and pass their own check.
    assert!(InterpolateParams::default().check().is_ok());
    assert!(ExtrapolateParams::default().check().is_ok());
    assert!(GaussianNoiseParams::default().check().is_ok());
    assert!(PrincipalNoiseParams::default().check().is_ok());
    let no_k = NeighbourParams {
        k: 0,
        ..NeighbourParams::default()
    };
    let e = InterpolateParams::default()
        .neighbours(no_k)
        .check()
        .unwrap_err();
    assert_eq!(name_of(e), "neighbours");
    let p = ExtrapolateParams::default().lambda(0.0);
    assert!(p.check_ref().is_err());
    assert_eq!(name_of(p.check().unwrap_err()), "magnitude");
    let e = PrincipalNoiseParams::default()
        .variance_kept(1.5)
        .check()
        .unwrap_err();
    assert_eq!(name_of(e), "variance-kept");
    let e = GaussianNoiseParams::default()
        .magnitude(f32::NAN)
        .check()
        .unwrap_err();
    assert!(!e.to_string().contains("--"), "{e}");
    // What each method reads comes from its params, and the registry reports it.
    assert_eq!(
        MethodKind::Interpolate.reads(),
        <InterpolateParams as MethodParams>::READS
    );
    assert!(!MethodKind::Interpolate.reads_param(Param::Magnitude));
    assert!(MethodKind::Extrapolate.reads_param(Param::Magnitude));
    assert!(MethodKind::PrincipalNoise.reads_param(Param::VarianceKept));
    assert!(MethodKind::None.reads().is_empty());
    // Names are unique, parse back, and every method has help text.
    for m in MethodKind::ALL {
        assert_eq!(m.name().parse::<MethodKind>().unwrap(), m);
        assert!(!m.help().is_empty());
    }
}

#[test]
fn none_adds_nothing() {
    let ds = blobs(&[10, 3], 4, 9);
    let g = grow(
        &ds,
        build(MethodKind::None, &AugmentParams::default())
            .unwrap()
            .as_ref(),
        &Plan { add: vec![0, 7] },
        true,
        1,
        &[],
    )
    .unwrap();
    assert_eq!(g.x.dim(), (0, 4));
    assert!(g.labels.is_empty() && g.provenance.is_empty() && g.notes.is_empty());
}

#[test]
fn non_finite_rows_and_bad_requests_are_errors() {
    // Rows near f32::MAX: noise of 1000 σ overflows f32; that must be an error, not Inf rows.
    let x = Array2::from_shape_vec((2, 2), vec![3.0e38, -3.0e38, -3.0e38, 3.0e38]).unwrap();
    let ds = Dataset::new(x, vec![0, 0], vec!["a".into()]);
    let m = build(MethodKind::GaussianNoise, &params(1, Some(1000.0))).unwrap();
    assert!(matches!(
        grow(&ds, m.as_ref(), &Plan { add: vec![20] }, false, 1, &[]),
        Err(Error::Data { .. })
    ));

    let ds = blobs(&[10, 10], 3, 10);
    let fitted = build(MethodKind::GaussianNoise, &AugmentParams::default())
        .unwrap()
        .fit(&(&ds).into(), &[0])
        .unwrap();
    // Sampling a class the method was not fitted on is refused.
    assert!(fitted.sample(1, 3, &mut seed::stream(1, &[])).is_err());
    assert_eq!(
        fitted
            .sample(0, 0, &mut seed::stream(1, &[]))
            .unwrap()
            .x
            .dim(),
        (0, 3)
    );
    // A plan for more classes than the training set has is refused.
    let m = build(MethodKind::GaussianNoise, &AugmentParams::default()).unwrap();
    assert!(grow(&ds, m.as_ref(), &Plan { add: vec![0, 0, 5] }, false, 1, &[]).is_err());
}

#[test]
fn cosine_metric_picks_cosine_neighbours() {
    let ds = blobs(&[25], 6, 12);
    let p = AugmentParams {
        metric: Metric::Cosine,
        ..params(4, None)
    };
    let g = grow(
        &ds,
        build(MethodKind::Interpolate, &p).unwrap().as_ref(),
        &Plan { add: vec![40] },
        false,
        2,
        &[],
    )
    .unwrap();
    assert_eq!(g.x.nrows(), 40);
    for pr in &g.provenance {
        // Neighbours by 1 − cos (the metric's definition), brute force in f64.
        assert!(among_k_nearest_by(
            &ds,
            pr.parent,
            pr.partner.unwrap(),
            4,
            cosine_dist
        ));
    }
}

#[test]
fn an_unknown_class_lists_only_the_first_twenty_of_many() {
    // 500 one-row classes (invented): the message names 20 and counts the rest.
    let names: Vec<String> = (0..500).map(|i| format!("k{i:03}")).collect();
    let x = ndarray::Array2::<f32>::zeros((500, 2));
    let ds = embloom::Dataset::new(x, (0..500).collect(), names);
    let err = embloom::augment::class_indices(&["nope".to_string()], &ds).unwrap_err();
    let text = err.to_string();
    assert!(text.contains("no class named 'nope'"), "{text}");
    assert!(text.contains("k000, k001"), "{text}");
    assert!(text.contains("k019, and 480 more"), "{text}");
    assert!(!text.contains("k020"), "{text}");
}
