//! Reading the committed fixtures (written by tests/reference/io_make_fixtures.py with numpy,
//! h5py and safetensors) and writing every output format, checked by
//! tests/reference/io_check_written.py and by reading the files back.

use std::path::{Path, PathBuf};
use std::process::Command;

use embloom::data::Dataset;
use embloom::io::{AugmentedSet, Loaded, ReadOptions, read, write};
use ndarray::Array2;

fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/io")
        .join(name)
}

/// The matrix io_make_fixtures.py writes: X[i, j] = i * 0.5 + j * 0.25 - 1 (exact in f16).
fn fixture_x() -> Array2<f32> {
    Array2::from_shape_fn((6, 4), |(i, j)| i as f32 * 0.5 + j as f32 * 0.25 - 1.0)
}

fn names(ds: &Dataset) -> Vec<String> {
    ds.labels
        .iter()
        .map(|&l| ds.classes[l as usize].clone())
        .collect()
}

fn strs(v: &[&str]) -> Vec<String> {
    v.iter().map(|s| s.to_string()).collect()
}

const INT_LABELS: [&str; 6] = ["3", "1", "3", "2", "1", "3"];
const TEXT_LABELS: [&str; 6] = ["cat", "dog", "cat", "émeu", "dog", "cat"];

fn npy(x: &str, labels: &str) -> Loaded {
    let opts = ReadOptions {
        labels_file: Some(fixture(labels)),
        ..ReadOptions::default()
    };
    read(&fixture(x), &opts).unwrap()
}

#[test]
fn npy_dtypes_orders_and_label_types() {
    // Source: values written by tests/reference/io_make_fixtures.py (numpy.save).
    for (file, dtype) in [
        ("x_f16.npy", "f16"),
        ("x_f32.npy", "f32"),
        ("x_f64.npy", "f64"),
        ("x_f32_be.npy", "f32"),
        ("x_f64_fortran.npy", "f64"),
    ] {
        let l = npy(file, "labels_i16.npy");
        assert_eq!(l.dataset.x, fixture_x(), "{file}");
        assert_eq!(l.dataset.stored_dtype, dtype, "{file}");
        assert_eq!(names(&l.dataset), strs(&INT_LABELS), "{file}");
        // numpy.unique(labels) order (from memory: numeric for integer labels).
        assert_eq!(l.dataset.classes, strs(&["1", "2", "3"]));
    }
    for (labels, want) in [
        ("labels_u16_be.npy", &INT_LABELS),
        ("labels_f64.npy", &INT_LABELS),
        ("labels_text.npy", &TEXT_LABELS),
        ("labels_bytes.npy", &TEXT_LABELS),
    ] {
        assert_eq!(
            names(&npy("x_f32.npy", labels).dataset),
            strs(want),
            "{labels}"
        );
    }
}

#[test]
fn npz_stored_and_deflated_with_extras() {
    // Source: np.savez / np.savez_compressed in io_make_fixtures.py.
    for (file, want) in [
        ("set_stored.npz", &TEXT_LABELS),
        ("set_deflated.npz", &INT_LABELS),
    ] {
        let l = read(&fixture(file), &ReadOptions::default()).unwrap();
        // The fixtures use the older key names `ids` and `groups`: read, with a note each.
        assert_eq!(l.notes.len(), 2, "{file}: {:?}", l.notes);
        assert!(l.notes[0].contains("'ids'") && l.notes[1].contains("'groups'"));
        let d = l.dataset;
        assert!(d.int_ids && !d.int_groups, "{file}: int32 ids, text groups");
        assert_eq!(d.x, fixture_x(), "{file}");
        assert_eq!(names(&d), strs(want), "{file}");
        assert_eq!(d.groups, Some(strs(&["g0", "g0", "g1", "g1", "g2", "g2"])));
        assert_eq!(d.ids, Some((100..106).map(|i| i.to_string()).collect()));
        assert_eq!(d.folds, Some(vec![0, 1, 0, 1, 0, 1]));
    }
}

#[test]
fn safetensors_fixtures() {
    // Source: safetensors.numpy.save_file in io_make_fixtures.py.
    let d = read(&fixture("set_f16.safetensors"), &ReadOptions::default())
        .unwrap()
        .dataset;
    assert_eq!((d.x.clone(), d.stored_dtype.as_str()), (fixture_x(), "f16"));
    assert_eq!(names(&d), strs(&INT_LABELS));
    assert_eq!(d.groups, Some(strs(&["7", "7", "8", "8", "9", "9"])));
    let opts = ReadOptions {
        embeddings_key: "emb".into(),
        labels_key: "y".into(),
        ..ReadOptions::default()
    };
    let d = read(&fixture("set_f32.safetensors"), &opts)
        .unwrap()
        .dataset;
    assert_eq!(d.x, fixture_x());
    assert_eq!(names(&d), strs(&INT_LABELS));
}

#[test]
fn csv_and_tsv_fixtures() {
    // Source: io_make_fixtures.py writes table.csv with a BOM, CRLF, quoted label with "" and ,
    let l = read(&fixture("table.csv"), &ReadOptions::default()).unwrap();
    let d = l.dataset;
    assert_eq!(d.x, fixture_x());
    let mut want = strs(&TEXT_LABELS);
    want[1] = "dog, \"the good one\"".into();
    assert_eq!(names(&d), want);
    assert_eq!(d.ids, Some((100..106).map(|i| i.to_string()).collect()));
    assert_eq!(d.folds, Some(vec![0, 1, 0, 1, 0, 1]));
    let d = read(&fixture("table.tsv"), &ReadOptions::default())
        .unwrap()
        .dataset;
    assert_eq!(d.x, fixture_x());
    assert_eq!(names(&d), strs(&TEXT_LABELS));
}

#[cfg(feature = "hdf5")]
#[test]
fn hdf5_nested_chunked_gzip() {
    // Source: h5py create_dataset(chunks=..., compression="gzip") in io_make_fixtures.py.
    for labels in ["meta/labels", "meta/labels_fixed", "meta/labels_int"] {
        let opts = ReadOptions {
            embeddings_key: "feats/emb".into(),
            labels_key: labels.into(),
            ..ReadOptions::default()
        };
        let d = read(&fixture("set.h5"), &opts).unwrap().dataset;
        assert_eq!(d.x, fixture_x(), "{labels}");
        let want = if labels.ends_with("int") {
            &INT_LABELS
        } else {
            &TEXT_LABELS
        };
        assert_eq!(names(&d), strs(want), "{labels}");
        assert_eq!(d.groups, Some(strs(&["g0", "g0", "g1", "g1", "g2", "g2"])));
        assert_eq!(d.folds, Some(vec![0, 1, 0, 1, 0, 1]));
    }
}

/// Mirrors SETS in io_check_written.py: x[i, j] = f32(3i + j) / 7 - 1 (f32 arithmetic).
fn base_x() -> Array2<f32> {
    Array2::from_shape_fn((5, 3), |(i, j)| (3 * i + j) as f32 / 7.0 - 1.0)
}

fn with_provenance(data: Dataset) -> AugmentedSet {
    AugmentedSet {
        data,
        origin: strs(&["real", "real", "real", "interpolate", "interpolate"]),
        parent: vec![0, 1, 2, 0, 1],
        partner: vec![-1, -1, -1, 2, 4],
        weight: vec![0.0, 0.0, 0.0, 0.25, 0.1],
        partner_label: None,
    }
}

fn text_set() -> AugmentedSet {
    let mut d = Dataset::new(base_x(), vec![0, 1, 0, 0, 1], strs(&["cat", "dog, \"x\""]));
    d.ids = Some(strs(&["r0", "r1", "r2", "r3", "r4"]));
    d.groups = Some(strs(&["a", "a", "b", "b", "c"]));
    d.folds = Some(vec![0, 1, 0, 1, 0]);
    with_provenance(d)
}

/// Integer ids and groups (synthetic rows -1), and real rows 0, 1, 2 taken from input rows
/// 4, 6 and 9 (as after dropping non-finite rows), synthetic rows carrying their parent's.
fn int_set() -> AugmentedSet {
    let mut d = Dataset::new(base_x(), vec![0, 1, 0, 0, 1], strs(&["7", "-2"]));
    d.ids = Some(strs(&["10", "11", "12", "-1", "-1"]));
    d.groups = Some(strs(&["5", "5", "6", "-1", "-1"]));
    d.int_ids = true;
    d.int_groups = true;
    d.source_row = Some(vec![4, 6, 9, 4, 6]);
    with_provenance(d)
}

fn extensions() -> Vec<&'static str> {
    let mut e = vec!["npz", "csv", "tsv", "safetensors"];
    if cfg!(feature = "hdf5") {
        e.push("h5");
    }
    e
}

#[test]
fn written_files_read_back_and_check_in_python() {
    let dir = tempfile::tempdir().unwrap();
    let mut written = Vec::new();
    for (prefix, set) in [("text", text_set()), ("int", int_set())] {
        for ext in extensions() {
            let out = dir.path().join(format!("{prefix}_set.{ext}"));
            write(&out, &set, false).unwrap();
            // Round trip through our own reader (common practice, no source).
            let back = read(&out, &ReadOptions::default()).unwrap().dataset;
            assert_eq!(back.x, set.data.x, "{}", out.display());
            assert_eq!(names(&back), names(&set.data), "{}", out.display());
            assert_eq!(back.ids, set.data.ids, "{}", out.display());
            assert_eq!(back.groups, set.data.groups, "{}", out.display());
            assert_eq!(back.folds, set.data.folds, "{}", out.display());
            // Integer roles stay integers in every format (a table column of integers reads
            // back as integers).
            assert_eq!(back.int_ids, set.data.int_ids, "{}", out.display());
            assert_eq!(back.int_groups, set.data.int_groups, "{}", out.display());
            written.push(out);
        }
    }
    let has_numpy = Command::new("python3")
        .args(["-c", "import numpy"])
        .output()
        .is_ok_and(|o| o.status.success());
    if !has_numpy {
        assert!(
            std::env::var("CI").map_or(true, |v| v != "true"),
            "CI=true but python3 with numpy is missing"
        );
        eprintln!("skipping the Python check: python3 with numpy not found");
        return;
    }
    // Source: numpy / csv / safetensors / h5py reading the files (tests/reference/io_check_written.py).
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/reference/io_check_written.py");
    let out = Command::new("python3")
        .arg(script)
        .args(&written)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}\n{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
}

#[test]
fn half_types_are_written_as_half_types() {
    // bf16 and f16 values are exact in f32, so a set that came in as either goes out as it
    // came (bf16 as f32 in npz and HDF5, which have no bf16 type). The bits are the half
    // crate's conversion of the f32 values, which are exact here (multiples of 1/4 below 4).
    // Common practice, no source.
    use embloom::FloatType;
    let x = Array2::from_shape_fn((5, 3), |(i, j)| i as f32 * 0.5 - j as f32 * 0.25);
    let dir = tempfile::tempdir().unwrap();
    for (float_type, ext, want) in [
        (FloatType::BF16, "safetensors", FloatType::BF16),
        (FloatType::F16, "safetensors", FloatType::F16),
        (FloatType::F16, "npz", FloatType::F16),
        (FloatType::BF16, "npz", FloatType::F32),
    ] {
        let mut d = Dataset::new(x.clone(), vec![0, 1, 0, 0, 1], strs(&["a", "b"]));
        d.float_type = float_type;
        let out = dir.path().join(format!("{float_type:?}.{ext}"));
        write(&out, &with_provenance(d), false).unwrap();
        let back = read(&out, &ReadOptions::default()).unwrap().dataset;
        assert_eq!(back.float_type, want, "{}", out.display());
        assert_eq!(back.x, x, "{}", out.display());
    }
}
