//! The methods that pick real rows differently: `duplicate` (random oversampling),
//! `borderline` (Borderline-SMOTE1) and `adaptive` (ADASYN), checked on worked examples of
//! their published rules (sources beside each check).

use embloom::Dataset;
use embloom::augment::AugmentParams;
use embloom::augment::{
    AdaptiveParams, Augmenter, BorderlineParams, FitNote, MethodKind, NeighbourParams, ParamGuard,
    Plan, build, grow,
};
use ndarray::Array2;

/// A one-dimensional set: `values[i]` with label `labels[i]`.
fn line(values: &[f32], labels: &[u32]) -> Dataset {
    let x = Array2::from_shape_vec((values.len(), 1), values.to_vec()).unwrap();
    Dataset::new(x, labels.to_vec(), vec!["major".into(), "minor".into()])
}

fn neighbours(k: usize) -> NeighbourParams {
    NeighbourParams {
        k,
        ..NeighbourParams::default()
    }
}

/// Every synthetic row lies on the segment from its parent to a same-class partner, at the
/// recorded u (SMOTE's rule, Chawla et al. 2002).
fn on_segments(ds: &Dataset, g: &embloom::augment::Grown) {
    for (i, p) in g.provenance.iter().enumerate() {
        let q = p.partner.expect("an interpolated row has a partner");
        assert_eq!(ds.labels[q], ds.labels[p.parent]);
        let (a, b) = (ds.x[[p.parent, 0]], ds.x[[q, 0]]);
        assert!((g.x[[i, 0]] - (a + p.weight * (b - a))).abs() < 1e-5);
        assert!((0.0..=1.0).contains(&p.weight));
    }
}

fn parent_counts(g: &embloom::augment::Grown, n_rows: usize) -> Vec<usize> {
    let mut c = vec![0; n_rows];
    for p in &g.provenance {
        c[p.parent] += 1;
    }
    c
}

#[test]
fn duplicate_copies_real_rows_drawn_uniformly() {
    // common practice, no source: random oversampling copies rows of the class uniformly
    // with replacement; the copy's parent is the copied row and it has no partner.
    let ds = line(
        &[0.0, 1.0, 2.0, 3.0, 10.0, 11.0, 12.0, 13.0, 50.0],
        &[0, 0, 0, 0, 1, 1, 1, 1, 0],
    );
    let method = build(MethodKind::Duplicate, &AugmentParams::default()).unwrap();
    let n = 8000;
    let g = grow(
        &ds,
        method.as_ref(),
        &Plan { add: vec![0, n] },
        false,
        3,
        &[],
    )
    .unwrap();
    assert_eq!(g.x.nrows(), n);
    for (i, p) in g.provenance.iter().enumerate() {
        assert_eq!(p.partner, None);
        assert_eq!(ds.labels[p.parent], 1);
        assert_eq!(g.x.row(i), ds.x.row(p.parent));
    }
    // Each of the 4 rows is drawn with p = 1/4: count within 5 binomial standard errors.
    let counts = parent_counts(&g, ds.n_rows());
    let (mean, se) = (n as f64 / 4.0, (n as f64 * 0.25 * 0.75).sqrt());
    for &c in &counts[4..8] {
        assert!((c as f64 - mean).abs() < 5.0 * se, "{counts:?}");
    }
    // A one-row class grows too (copies of its one row), unlike the neighbour methods.
    let one = line(&[0.0, 1.0, 7.0], &[0, 0, 1]);
    let g = grow(
        &one,
        method.as_ref(),
        &Plan { add: vec![0, 3] },
        false,
        3,
        &[],
    )
    .unwrap();
    assert_eq!(g.x.column(0).to_vec(), vec![7.0; 3]);
    assert!(g.notes.is_empty());
}

/// The worked example for Borderline-SMOTE1 with m = 4 (Han, Wang & Mao 2005, section 3).
/// Minority rows 0.0, 0.1, 0.2 have only minority rows among their 4 nearest: safe. 10.0 and
/// 10.1 have 3 of 4 majority rows (10.2, 10.3, 10.4): m/2 ≤ 3 < 4, in danger. 30.0 sits among
/// four majority rows: m' = m, noise, not a base.
fn borderline_example() -> Dataset {
    let minor = [0.0, 0.1, 0.2, 10.0, 10.1, 30.0];
    let major = [10.2, 10.3, 10.4, 10.5, 10.6, 29.8, 29.9, 30.1, 30.2];
    let values: Vec<f32> = minor.iter().chain(&major).copied().collect();
    let labels: Vec<u32> = (0..values.len()).map(|i| u32::from(i < 6)).collect();
    line(&values, &labels)
}

#[test]
fn borderline_grows_only_rows_in_danger() {
    let ds = borderline_example();
    let method = BorderlineParams::default()
        .neighbours(neighbours(2))
        .danger_neighbours(4)
        .check()
        .unwrap();
    assert_eq!(method.kind(), MethodKind::Borderline);
    let g = grow(&ds, &method, &Plan { add: vec![0, 400] }, false, 9, &[]).unwrap();
    let counts = parent_counts(&g, ds.n_rows());
    // Han et al. 2005: only DANGER rows (rows 3 and 4 here) are bases; drawn uniformly.
    assert_eq!(&counts[..3], &[0, 0, 0], "safe rows must not be bases");
    assert_eq!(counts[5], 0, "a noise row must not be a base");
    assert!(counts[3] > 150 && counts[4] > 150, "{counts:?}");
    on_segments(&ds, &g);
    assert!(g.notes.is_empty(), "{:?}", g.notes);

    // The paper's default m = 10 is reduced (with a note) when the set is smaller.
    let small = line(&[0.0, 0.1, 0.2, 5.0], &[1, 1, 1, 0]);
    let m10 = build(MethodKind::Borderline, &AugmentParams::default()).unwrap();
    let g = grow(
        &small,
        m10.as_ref(),
        &Plan { add: vec![0, 3] },
        false,
        1,
        &[],
    )
    .unwrap();
    assert!(g.notes.iter().any(|n| matches!(n,
        FitNote::Adjusted { class: 1, detail } if detail.contains("3 all-class neighbours"))));
}

#[test]
fn borderline_falls_back_to_every_row_with_a_note() {
    // No minority row has a majority row among its m nearest: nothing is in danger, so every
    // row is a base (as plain SMOTE) and the fit says so.
    let ds = line(&[0.0, 0.1, 0.2, 0.3, 50.0, 51.0], &[1, 1, 1, 1, 0, 0]);
    let method = BorderlineParams::default()
        .neighbours(neighbours(2))
        .danger_neighbours(3)
        .check()
        .unwrap();
    let g = grow(&ds, &method, &Plan { add: vec![0, 400] }, false, 2, &[]).unwrap();
    let counts = parent_counts(&g, ds.n_rows());
    assert!(counts[..4].iter().all(|&c| c > 50), "{counts:?}");
    assert!(
        matches!(&g.notes[..], [FitNote::Adjusted { class: 1, detail }] if detail.contains("no row in danger"))
    );
    on_segments(&ds, &g);
    assert!(
        BorderlineParams::default()
            .danger_neighbours(0)
            .check()
            .is_err()
    );
}

/// The worked example for ADASYN with K = 2 (He, Bai, Garcia & Li 2008, steps (b)–(c)).
/// Minority rows 0.0, 0.5 have no majority row among their 2 nearest (r = 0); 3.0 has 3.2
/// and 3.5 (r = 1); 7.0 and 7.3 have each other and 6.0 (r = 1/2). Shares g = G·r/Σr.
#[test]
fn adaptive_shares_follow_the_other_class_fraction() {
    let values = [0.0, 0.5, 3.0, 7.0, 7.3, 3.2, 3.5, 6.0, 20.0, 21.0];
    let labels = [1, 1, 1, 1, 1, 0, 0, 0, 0, 0];
    let ds = line(&values, &labels);
    let method = AdaptiveParams::default()
        .neighbours(neighbours(2))
        .check()
        .unwrap();
    // G = 10: g = (0, 0, 5, 2.5, 2.5) → floors (0, 0, 5, 2, 2), the one left over goes to the
    // earlier of the tied fractional parts: (0, 0, 5, 3, 2). Worked by hand.
    // G = 7: g = (0, 0, 3.5, 1.75, 1.75) → floors (0, 0, 3, 1, 1), two left over to the
    // largest fractions .75, .75: (0, 0, 3, 2, 2).
    for (g_total, want) in [(10, [0, 0, 5, 3, 2]), (7, [0, 0, 3, 2, 2])] {
        let g = grow(
            &ds,
            &method,
            &Plan {
                add: vec![0, g_total],
            },
            false,
            4,
            &[],
        )
        .unwrap();
        let counts = parent_counts(&g, ds.n_rows());
        assert_eq!(&counts[..5], &want, "G = {g_total}");
        assert_eq!(counts.iter().sum::<usize>(), g_total);
        on_segments(&ds, &g);
    }
    // No minority row near another class: equal shares, with a note.
    let far = line(&[0.0, 0.5, 1.0, 40.0, 41.0], &[1, 1, 1, 0, 0]);
    let g = grow(&far, &method, &Plan { add: vec![0, 300] }, false, 4, &[]).unwrap();
    assert!(matches!(&g.notes[..], [FitNote::Adjusted { class: 1, .. }]));
    assert!(parent_counts(&g, far.n_rows())[..3].iter().all(|&c| c > 50));
}

#[test]
fn row_choosing_methods_are_deterministic_and_listed() {
    // common practice, no source: a seed fixes the rows; the registry lists the methods.
    let ds = borderline_example();
    for kind in [
        MethodKind::Duplicate,
        MethodKind::Borderline,
        MethodKind::Adaptive,
    ] {
        assert!(MethodKind::ALL.contains(&kind));
        assert_eq!(kind.name().parse::<MethodKind>().unwrap(), kind);
        let m = build(kind, &AugmentParams::default()).unwrap();
        let plan = Plan { add: vec![0, 30] };
        let a = grow(&ds, m.as_ref(), &plan, false, 11, &[1]).unwrap();
        let b = grow(&ds, m.as_ref(), &plan, false, 11, &[1]).unwrap();
        assert_eq!(a.x, b.x, "{kind}");
        assert_eq!(a.x.nrows(), 30, "{kind}");
    }
}

/// `assemble_owned` extends the input's own matrix in place instead of stacking a copy; the
/// set it gives is the one `assemble` gives, field by field, for an f32 and an f64 input
/// (whose real rows keep their stored f64 values) with ids and folds.
#[test]
fn assemble_owned_equals_assemble() {
    use embloom::augment::{assemble, assemble_owned};
    use embloom::data::FloatType;
    // common practice, no source: two ways to stack the same rows give the same set.
    let values: Vec<f32> = (0..12).map(|i| i as f32 * 0.5 - 2.0).collect();
    let labels = [0, 0, 0, 0, 0, 0, 0, 0, 1, 1, 1, 1];
    for wide in [false, true] {
        let mut ds = line(&values, &labels);
        ds.ids = Some((0..12).map(|i| format!("r{i}")).collect());
        ds.folds = Some((0..12).map(|i| i % 3).collect());
        if wide {
            ds.float_type = FloatType::F64;
            ds.x_f64 = Some(ds.x.mapv(|v| f64::from(v) + 1e-9));
        }
        let method = build(MethodKind::Interpolate, &AugmentParams::default()).unwrap();
        let plan = Plan::new(&ds.class_counts(), embloom::augment::Target::Largest, None);
        let g = grow(&ds, method.as_ref(), &plan, false, 5, &[1]).unwrap();
        assert_eq!(g.x.nrows(), 4);
        let stacked = assemble(&ds, &g, MethodKind::Interpolate).unwrap();
        let owned = assemble_owned(ds.clone(), &g, MethodKind::Interpolate).unwrap();
        assert_eq!(owned.data.x, stacked.data.x);
        assert_eq!(owned.data.x_f64, stacked.data.x_f64);
        assert_eq!(owned.data.x_f64.is_some(), wide);
        assert_eq!(owned.data.labels, stacked.data.labels);
        assert_eq!(owned.data.ids, stacked.data.ids);
        assert_eq!(owned.data.folds, stacked.data.folds);
        assert_eq!(owned.data.source_row, stacked.data.source_row);
        assert_eq!(owned.origin, stacked.origin);
        assert_eq!(owned.parent, stacked.parent);
        assert_eq!(owned.partner, stacked.partner);
        assert_eq!(owned.weight, stacked.weight);
        assert_eq!(owned.data.x.nrows(), 16);
    }
}
