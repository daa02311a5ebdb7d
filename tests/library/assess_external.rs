//! External sets (embeddings of input-space augmented samples, each naming its parent) as
//! methods: in each fold a row is used only when its parent is a training row, drawn under the
//! budget, and a union trains on its parts' rows together. The gate is the protocol's promise
//! (common practice, no source): held-out rows must not shape what a probe is trained on.

use std::path::Path;

use embloom::Dataset;
use embloom::assess::{
    AssessConfig, AssessResults, ExternalBudget, ExternalConfig, FileRows, InputInfo, MethodId,
    RowSets, assess_sets_observed, resolve_external,
};
use embloom::augment::MethodKind;
use embloom::eval::protocol::{Fold, make_folds};
use ndarray::Array2;

// The same data and configuration as the grown-file tests: external sets use the same gate.
use crate::assess_from_file::{config, dataset};

fn info(ds: &Dataset) -> InputInfo {
    InputInfo::in_memory("test", ds)
}

/// One external row: its values, class and parent.
type Row = (Vec<f32>, u32, usize);

/// Honest rows of the two small classes: `per` jittered copies of each real row (a stand-in
/// for embeddings of augmented inputs), each naming that row as parent.
fn jittered(ds: &Dataset, per: usize) -> Vec<Row> {
    let mut rows = Vec::new();
    for r in 0..ds.n_rows() {
        if ds.labels[r] == 0 {
            continue;
        }
        for k in 0..per {
            let v =
                ds.x.row(r)
                    .iter()
                    .enumerate()
                    .map(|(j, &x)| x + 0.01 * ((r * 31 + j * 7 + k * 13) % 17) as f32 - 0.08)
                    .collect();
            rows.push((v, ds.labels[r], r));
        }
    }
    rows
}

fn set(ds: &Dataset, name: &str, rows: &[Row]) -> FileRows {
    let mut x = Array2::zeros((rows.len(), ds.dims()));
    for (i, r) in rows.iter().enumerate() {
        x.row_mut(i).assign(&ndarray::ArrayView1::from(&r.0[..]));
    }
    FileRows::external(
        name,
        x,
        rows.iter().map(|r| r.1).collect(),
        rows.iter().map(|r| r.2).collect(),
    )
    .unwrap()
}

fn run(
    ds: &Dataset,
    cfg: &AssessConfig,
    sets: &[FileRows],
    external: &ExternalConfig,
) -> AssessResults {
    assess_sets_observed(
        ds,
        cfg,
        info(ds),
        RowSets {
            rows: sets,
            config: external,
            sets: &[],
        },
        &mut |_| {},
    )
    .unwrap()
}

fn budget(budget: ExternalBudget) -> ExternalConfig {
    ExternalConfig {
        budget,
        unions: Vec::new(),
    }
}

/// The records of `method` in one fold, as JSON.
fn fold_records(r: &AssessResults, method: &str, fold: &Fold) -> Vec<serde_json::Value> {
    r.folds
        .iter()
        .filter(|f| f.method == method && f.repeat == fold.repeat && f.fold == fold.index)
        .map(|f| serde_json::to_value(f).unwrap())
        .collect()
}

fn synthetic(r: &AssessResults, method: &str, fold: &Fold) -> usize {
    r.folds
        .iter()
        .find(|f| f.method == method && f.repeat == fold.repeat && f.fold == fold.index)
        .unwrap_or_else(|| panic!("no {method} record"))
        .train_synthetic
}

#[test]
fn rows_copying_held_out_rows_change_nothing_in_their_fold() {
    // Planted rows copy the first fold's test rows, each naming that test row as parent. In
    // that fold none may be used, whatever the budget: the fold's records (every prediction
    // included) must be those of the set without them, bit for bit.
    let ds = dataset();
    let cfg = config(4, 2);
    let (_, folds) = make_folds(&ds, 4, 2, cfg.seed).unwrap();
    let base = jittered(&ds, 3);
    let mut planted = base.clone();
    for &r in &folds[0].test {
        planted.push((ds.x.row(r).to_vec(), ds.labels[r], r));
    }
    for b in [
        ExternalBudget::Match,
        ExternalBudget::All,
        ExternalBudget::PerClass(4),
    ] {
        let clean = run(&ds, &cfg, &[set(&ds, "jitter", &base)], &budget(b));
        let dirty = run(&ds, &cfg, &[set(&ds, "jitter", &planted)], &budget(b));
        assert_eq!(
            fold_records(&clean, "jitter", &folds[0]),
            fold_records(&dirty, "jitter", &folds[0]),
            "budget {b}"
        );
        assert!(synthetic(&clean, "jitter", &folds[0]) > 0, "budget {b}");
    }
    // Under `all` the other folds do use the planted rows: the gate is per fold.
    let clean = run(
        &ds,
        &cfg,
        &[set(&ds, "jitter", &base)],
        &budget(ExternalBudget::All),
    );
    let dirty = run(
        &ds,
        &cfg,
        &[set(&ds, "jitter", &planted)],
        &budget(ExternalBudget::All),
    );
    for fold in &folds {
        let used = |rows: &[Row]| rows.iter().filter(|r| !fold.test.contains(&r.2)).count();
        assert_eq!(synthetic(&clean, "jitter", fold), used(&base));
        assert_eq!(synthetic(&dirty, "jitter", fold), used(&planted));
    }
}

#[test]
fn match_adds_what_interpolate_adds_and_a_count_caps_each_class() {
    // Five rows per real row leave far more eligible rows than the plan adds, so `match` must
    // add exactly the plan's rows (what interpolate adds under the same target), and a count
    // must add that many per class the set has rows of.
    let ds = dataset();
    let cfg = config(5, 1);
    let (_, folds) = make_folds(&ds, 5, 1, cfg.seed).unwrap();
    let rows = [set(&ds, "jitter", &jittered(&ds, 5))];
    let matched = run(&ds, &cfg, &rows, &budget(ExternalBudget::Match));
    let capped = run(&ds, &cfg, &rows, &budget(ExternalBudget::PerClass(3)));
    for fold in &folds {
        assert_eq!(
            synthetic(&matched, "jitter", fold),
            synthetic(&matched, "interpolate", fold)
        );
        assert_eq!(synthetic(&capped, "jitter", fold), 2 * 3);
    }
    // The draw is seeded: the same run gives the same records.
    let again = run(&ds, &cfg, &rows, &budget(ExternalBudget::Match));
    assert_eq!(
        serde_json::to_value(&matched.folds).unwrap(),
        serde_json::to_value(&again.folds).unwrap()
    );
}

#[test]
fn a_union_trains_on_both_parts_each_made_as_alone() {
    let ds = dataset();
    let cfg = config(4, 1);
    let (_, folds) = make_folds(&ds, 4, 1, cfg.seed).unwrap();
    let union = MethodId::Union(vec![
        MethodId::External("jitter".into()),
        MethodId::Kind(MethodKind::Interpolate),
    ]);
    let external = ExternalConfig {
        budget: ExternalBudget::Match,
        unions: vec![union.clone()],
    };
    let r = run(
        &ds,
        &cfg,
        &[set(&ds, "jitter", &jittered(&ds, 3))],
        &external,
    );
    assert!(r.methods.contains(&union));
    for fold in &folds {
        assert_eq!(
            synthetic(&r, "jitter+interpolate", fold),
            synthetic(&r, "jitter", fold) + synthetic(&r, "interpolate", fold)
        );
    }
    // A part that is not in the assessment is refused, by name.
    let unknown = ExternalConfig {
        budget: ExternalBudget::Match,
        unions: vec![MethodId::Union(vec![
            MethodId::External("flips".into()),
            MethodId::Kind(MethodKind::Interpolate),
        ])],
    };
    let err = assess_sets_observed(
        &ds,
        &cfg,
        info(&ds),
        RowSets {
            rows: &[set(&ds, "jitter", &jittered(&ds, 1))],
            config: &unknown,
            sets: &[],
        },
        &mut |_| {},
    )
    .unwrap_err()
    .to_string();
    assert!(err.contains("'flips'"), "{err}");
}

/// An external file's rows as read: classes by name, parents as written.
fn external_file(classes: &[&str], labels: Vec<u32>, dims: usize) -> Dataset {
    let x = Array2::from_shape_fn((labels.len(), dims), |(i, j)| (i + j) as f32);
    Dataset::new(x, labels, classes.iter().map(|s| s.to_string()).collect())
}

#[test]
fn labels_come_from_the_set_and_parents_from_ids_or_row_indices() {
    // A mirrored "b" is a "c": the set's label wins, whatever the parent's class.
    let mut real = dataset();
    let set_rows = external_file(&["b", "c"], vec![1, 0], 6);
    let path = Path::new("flips.npz");
    let by_row =
        resolve_external("flips", path, &set_rows, &["45".into(), "3".into()], &real).unwrap();
    assert_eq!(by_row.labels(), [2, 1]);
    assert_eq!(by_row.parents(), [45, 3]);
    // With ids, parents name ids, not rows.
    real.ids = Some((0..real.n_rows()).map(|i| format!("img{i}")).collect());
    let by_id = resolve_external(
        "flips",
        path,
        &set_rows,
        &["img7".into(), "img9".into()],
        &real,
    )
    .unwrap();
    assert_eq!(by_id.parents(), [7, 9]);
}

#[test]
fn bad_rows_are_refused_with_the_row_named() {
    let mut real = dataset();
    let path = Path::new("flips.npz");
    let two = external_file(&["b"], vec![0, 0], 6);
    let err = resolve_external("flips", path, &two, &["1".into(), "62".into()], &real)
        .unwrap_err()
        .to_string();
    assert!(err.contains("row 1") && err.contains("'62'"), "{err}");
    let unknown_class = external_file(&["b", "zebra"], vec![0, 1], 6);
    let err = resolve_external(
        "flips",
        path,
        &unknown_class,
        &["1".into(), "2".into()],
        &real,
    )
    .unwrap_err()
    .to_string();
    assert!(err.contains("row 1") && err.contains("'zebra'"), "{err}");
    let narrow = external_file(&["b"], vec![0], 5);
    let err = resolve_external("flips", path, &narrow, &["1".into()], &real)
        .unwrap_err()
        .to_string();
    assert!(err.contains("5 values") && err.contains("6"), "{err}");
    real.ids = Some((0..real.n_rows()).map(|i| format!("img{i}")).collect());
    let err = resolve_external("flips", path, &two, &["img1".into(), "3".into()], &real)
        .unwrap_err()
        .to_string();
    assert!(err.contains("row 1") && err.contains("'3'"), "{err}");
}
