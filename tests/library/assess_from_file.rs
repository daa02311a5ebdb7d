//! A grown file's synthetic rows assessed as a method of their own: in each fold a row is used
//! only where its parent and its partner are training rows of that fold, so rows planted from
//! held-out rows never reach a probe. The gate is the protocol's promise (common practice, no
//! source): held-out rows must not shape what a probe is trained on.

use std::path::Path;

use embloom::Dataset;
use embloom::assess::{
    AssessConfig, AssessResults, FileRows, GrownFile, InputInfo, assess_grown_observed,
};
use embloom::augment::{AugmentParams, MethodKind, Target, UnitNorm};
use embloom::eval::protocol::{Fold, make_folds};
use embloom::probe::{KnnParams, LinearParams, ProbeKind};
use ndarray::Array2;

/// Random property-test input (not a figure): 3 classes of 40, 10 and 12 rows in 6 dims.
pub(crate) fn dataset() -> Dataset {
    let counts = [40usize, 10, 12];
    let mut labels = Vec::new();
    for (c, &k) in counts.iter().enumerate() {
        labels.extend(std::iter::repeat_n(c as u32, k));
    }
    let x = Array2::from_shape_fn((labels.len(), 6), |(i, j)| {
        let h = ((i * 7919 + j * 104_729) % 1000) as f32 / 1000.0;
        h + if j == labels[i] as usize { 1.2 } else { 0.0 }
    });
    Dataset::new(x, labels, vec!["a".into(), "b".into(), "c".into()])
}

pub(crate) fn config(folds: usize, repeats: usize) -> AssessConfig {
    AssessConfig {
        methods: vec![MethodKind::None, MethodKind::Interpolate],
        probes: vec![ProbeKind::Knn, ProbeKind::Linear],
        folds,
        repeats,
        target: Target::Largest,
        classes: None,
        augment: AugmentParams::default(),
        unit_norm: UnitNorm::Off,
        knn: KnnParams {
            k: 3,
            ..KnnParams::default()
        },
        linear: LinearParams::default(),
        interval: embloom::eval::IntervalKind::default(),
        seed: 11,
        diagnostics: true,
    }
    .validated()
    .unwrap()
}

fn info(ds: &Dataset) -> InputInfo {
    InputInfo::in_memory("test", ds)
}

/// One planted or honest synthetic row: its values, class, parent and partner.
type Row = (Vec<f32>, u32, usize, Option<usize>);

/// Honest rows of the two small classes: the midpoint of each row and the next row of its
/// class, as interpolate with u = 0.5 would make them.
fn honest(ds: &Dataset) -> Vec<Row> {
    let mut rows = Vec::new();
    for c in 1..3u32 {
        let of = ds.rows_of_class(c);
        for w in of.windows(2) {
            let (a, b) = (w[0], w[1]);
            let mid = (&ds.x.row(a) + &ds.x.row(b)).mapv(|v| v * 0.5).to_vec();
            rows.push((mid, c, a, Some(b)));
        }
    }
    rows
}

fn file_rows(ds: &Dataset, rows: &[Row]) -> FileRows {
    let mut x = Array2::zeros((rows.len(), ds.dims()));
    for (i, r) in rows.iter().enumerate() {
        x.row_mut(i).assign(&ndarray::ArrayView1::from(&r.0[..]));
    }
    FileRows::new(
        "interpolate",
        x,
        rows.iter().map(|r| r.1).collect(),
        rows.iter().map(|r| r.2).collect(),
        rows.iter().map(|r| r.3).collect(),
    )
    .unwrap()
}

fn run(ds: &Dataset, cfg: &AssessConfig, rows: &[Row]) -> AssessResults {
    assess_grown_observed(ds, cfg, info(ds), &[file_rows(ds, rows)], &mut |_| {}).unwrap()
}

/// A copy of data row `r` as a planted synthetic row.
fn copy_of(ds: &Dataset, r: usize, parent: usize, partner: Option<usize>) -> Row {
    (ds.x.row(r).to_vec(), ds.labels[r], parent, partner)
}

const FROM_FILE: &str = "interpolate (from file)";

/// The from-file method's records of one fold, as JSON, with every test row's prediction.
fn fold_records(r: &AssessResults, fold: &Fold) -> Vec<(serde_json::Value, Vec<u32>)> {
    r.folds
        .iter()
        .filter(|f| f.method == FROM_FILE && f.repeat == fold.repeat && f.fold == fold.index)
        .map(|f| (serde_json::to_value(f).unwrap(), f.outcome.pred.clone()))
        .collect()
}

fn everything(r: &AssessResults) -> serde_json::Value {
    serde_json::json!({
        "methods": r.methods,
        "summary": r.summary,
        "per_class": r.per_class,
        "folds": r.folds,
        "diagnostics": r.diagnostics,
        "sentences": r.sentences,
        "warnings": r.warnings,
    })
}

#[test]
fn rows_copied_from_held_out_rows_never_reach_a_probe() {
    // Two folds: each planted row copies a test row of one fold (its parent) and names a test
    // row of the other fold as partner, so no fold may use it. The results must be those of
    // the file without the planted rows, bit for bit.
    let ds = dataset();
    let cfg = config(2, 1);
    let (_, folds) = make_folds(&ds, 2, 1, cfg.seed).unwrap();
    let base = honest(&ds);
    let mut planted = base.clone();
    for &r in &folds[0].test {
        let other = *folds[1]
            .test
            .iter()
            .find(|&&q| ds.labels[q] == ds.labels[r])
            .unwrap();
        planted.push(copy_of(&ds, r, r, Some(other)));
    }
    let clean = run(&ds, &cfg, &base);
    let dirty = run(&ds, &cfg, &planted);
    assert_eq!(everything(&clean), everything(&dirty));
    // The honest rows were used (the comparison is not between two empty methods).
    assert!(
        clean
            .folds
            .iter()
            .any(|f| f.method == FROM_FILE && f.train_synthetic > 0)
    );
}

#[test]
fn a_row_whose_parent_is_a_test_row_is_left_out_of_that_fold_only() {
    // Planted rows copy the first fold's test rows, each its own parent, with no partner.
    // In that fold they must be invisible; in every other fold their parent is a training row,
    // so they are used, and the count of synthetic rows says exactly how many.
    let ds = dataset();
    let cfg = config(4, 2);
    let (_, folds) = make_folds(&ds, 4, 2, cfg.seed).unwrap();
    let base = honest(&ds);
    let mut planted = base.clone();
    for &r in &folds[0].test {
        planted.push(copy_of(&ds, r, r, None));
    }
    let clean = run(&ds, &cfg, &base);
    let dirty = run(&ds, &cfg, &planted);
    assert_eq!(
        fold_records(&clean, &folds[0]),
        fold_records(&dirty, &folds[0])
    );
    for fold in &folds {
        let in_train = |r: usize| !fold.test.contains(&r);
        let used = |rows: &[Row]| {
            rows.iter()
                .filter(|r| in_train(r.2) && r.3.is_none_or(in_train))
                .count()
        };
        for (results, rows) in [(&clean, &base), (&dirty, &planted)] {
            let rec = results
                .folds
                .iter()
                .find(|f| f.method == FROM_FILE && f.repeat == fold.repeat && f.fold == fold.index)
                .unwrap();
            assert_eq!(rec.train_synthetic, used(rows), "fold {:?}", fold.index);
        }
    }
    // The other folds did get the planted rows (the gate is per fold, not a blanket drop).
    let extra: usize = folds[1..]
        .iter()
        .map(|f| {
            let n = |r: &AssessResults| {
                r.folds
                    .iter()
                    .find(|x| x.method == FROM_FILE && x.repeat == f.repeat && x.fold == f.index)
                    .unwrap()
                    .train_synthetic
            };
            n(&dirty) - n(&clean)
        })
        .sum();
    assert!(extra > 0);
}

#[test]
fn a_row_whose_partner_is_a_test_row_is_left_out_of_that_fold() {
    // Planted rows copy the first fold's test rows and name them as partner; their parent is a
    // training row of that fold. Used there, they would put test rows into training (and the
    // guard would refuse the run), so that fold must match the file without them.
    let ds = dataset();
    let cfg = config(4, 1);
    let (_, folds) = make_folds(&ds, 4, 1, cfg.seed).unwrap();
    let base = honest(&ds);
    let mut planted = base.clone();
    for &r in &folds[0].test {
        let parent = *folds[0]
            .train
            .iter()
            .find(|&&q| ds.labels[q] == ds.labels[r])
            .unwrap();
        planted.push(copy_of(&ds, r, parent, Some(r)));
    }
    let clean = run(&ds, &cfg, &base);
    let dirty = run(&ds, &cfg, &planted);
    assert_eq!(
        fold_records(&clean, &folds[0]),
        fold_records(&dirty, &folds[0])
    );
}

#[test]
fn a_row_that_copies_a_test_row_behind_honest_provenance_is_refused() {
    // Provenance that names two training rows while the row is a held-out row: the file lies
    // about what its rows were made from, and the run stops rather than score it.
    let ds = dataset();
    let cfg = config(4, 1);
    let (_, folds) = make_folds(&ds, 4, 1, cfg.seed).unwrap();
    let r = folds[0].test[0];
    let parent = folds[0].train[0];
    let rows = vec![copy_of(&ds, r, parent, None)];
    let err = assess_grown_observed(&ds, &cfg, info(&ds), &[file_rows(&ds, &rows)], &mut |_| {})
        .unwrap_err()
        .to_string();
    assert!(err.contains("identical to a held-out test row"), "{err}");
    assert!(err.contains("from file"), "{err}");
}

#[test]
fn a_grown_file_is_split_by_origin_and_its_indices_name_real_rows() {
    // Rows as a grown file holds them: real rows first with parent = own index, then two
    // origins. One real row was dropped (index 1 is missing), so positions and stored indices
    // differ: a synthetic row with parent 2 must point at the second kept real row.
    let x = Array2::from_shape_fn((7, 2), |(i, j)| (i * 10 + j) as f32);
    let labels = vec![0, 1, 0, 1, 0, 1, 0];
    let ds = Dataset::new(x, labels, vec!["p".into(), "q".into()]);
    let origin: Vec<String> = [
        "real",
        "real",
        "real",
        "real",
        "interpolate",
        "gaussian-noise",
        "interpolate",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    let parent = [0, 2, 3, 4, 2, 4, 0];
    let partner = [-1, -1, -1, -1, 4, -1, 3];
    let file = GrownFile::split(
        Path::new("g.npz"),
        ds.clone(),
        Some(&origin),
        Some(&parent),
        Some(&partner),
    )
    .unwrap();
    assert_eq!(file.real.n_rows(), 4);
    let names: Vec<String> = file.methods.iter().map(|m| m.id().to_string()).collect();
    assert_eq!(
        names,
        ["interpolate (from file)", "gaussian-noise (from file)"]
    );
    assert_eq!(file.methods[0].n_rows(), 2);
    // File rows 4 and 6: parents stored as 2 and 0 are kept real rows 1 and 0; partners
    // stored as 4 and 3 are kept real rows 3 and 2.
    assert_eq!(file.methods[0].parents(), [1, 0]);
    assert_eq!(file.methods[0].partners(), [Some(3), Some(2)]);
    assert_eq!(file.methods[1].parents(), [3]);
    assert_eq!(file.methods[1].partners(), [None]);

    let unknown = [0, 2, 3, 4, 9, 4, 0];
    let err = GrownFile::split(
        Path::new("g.npz"),
        ds,
        Some(&origin),
        Some(&unknown),
        Some(&partner),
    )
    .unwrap_err()
    .to_string();
    assert!(err.contains("g.npz") && err.contains("parent 9"), "{err}");
}
