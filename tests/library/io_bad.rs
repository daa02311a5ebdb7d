//! Bad inputs and refused outputs: each must fail with a message naming the file and the key,
//! row or column, and never panic. Expected behaviour: common practice, no source, unless noted.

use std::fs;
use std::path::{Path, PathBuf};

use embloom::data::Dataset;
use embloom::io::{AugmentedSet, ReadOptions, read, write};
use ndarray::Array2;
use tempfile::TempDir;

fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/io")
        .join(name)
}

fn err(path: &Path, opts: &ReadOptions) -> String {
    match read(path, opts) {
        Ok(_) => panic!("{} should be refused", path.display()),
        Err(e) => e.to_string(),
    }
}

fn has(msg: &str, parts: &[&str]) {
    for p in parts {
        assert!(msg.contains(p), "message lacks '{p}':\n{msg}");
    }
}

/// A minimal .npy image with a hand-written header (NEP 1 layout).
fn npy_image(header: &str, data: &[u8]) -> Vec<u8> {
    let mut h = header.to_string();
    while !(10 + h.len() + 1).is_multiple_of(64) {
        h.push(' ');
    }
    h.push('\n');
    let mut out = b"\x93NUMPY\x01\x00".to_vec();
    out.extend_from_slice(&(h.len() as u16).to_le_bytes());
    out.extend_from_slice(h.as_bytes());
    out.extend_from_slice(data);
    out
}

fn f32_bytes(v: &[f32]) -> Vec<u8> {
    v.iter().flat_map(|x| x.to_le_bytes()).collect()
}

fn labels_opts(dir: &TempDir, labels: &[i64]) -> ReadOptions {
    let lp = dir.path().join("y.npy");
    let body: Vec<u8> = labels.iter().flat_map(|x| x.to_le_bytes()).collect();
    fs::write(
        &lp,
        npy_image(
            &format!(
                "{{'descr': '<i8', 'fortran_order': False, 'shape': ({},), }}",
                labels.len()
            ),
            &body,
        ),
    )
    .unwrap();
    ReadOptions {
        labels_file: Some(lp),
        ..ReadOptions::default()
    }
}

fn write_x(dir: &TempDir, name: &str, rows: usize, cols: usize, v: &[f32]) -> PathBuf {
    let p = dir.path().join(name);
    fs::write(
        &p,
        npy_image(
            &format!("{{'descr': '<f4', 'fortran_order': False, 'shape': ({rows}, {cols}), }}"),
            &f32_bytes(v),
        ),
    )
    .unwrap();
    p
}

#[test]
fn missing_file_and_unknown_extension() {
    let m = err(Path::new("/nonexistent/emb.npz"), &ReadOptions::default());
    has(&m, &["/nonexistent/emb.npz", "not found"]);
    let dir = TempDir::new().unwrap();
    let p = dir.path().join("emb.orc");
    fs::write(&p, b"x").unwrap();
    has(
        &err(&p, &ReadOptions::default()),
        &["emb.orc", ".orc", ".npz", ".safetensors", ".h5", ".parquet"],
    );
}

#[test]
fn npy_without_labels_file() {
    let p = fixture("x_f32.npy");
    has(
        &err(&p, &ReadOptions::default()),
        &["x_f32.npy", "`labels_file`"],
    );
}

#[test]
fn missing_key_lists_present_keys() {
    let p = fixture("set_stored.npz");
    let opts = ReadOptions {
        embeddings_key: "feats".into(),
        ..ReadOptions::default()
    };
    has(
        &err(&p, &opts),
        &[
            "set_stored.npz",
            "key 'feats'",
            "embeddings",
            "fold",
            "groups",
            "ids",
            "labels",
        ],
    );
    let p = fixture("set_f32.safetensors");
    has(
        &err(&p, &ReadOptions::default()),
        &["set_f32.safetensors", "key 'embeddings'", "emb", "y"],
    );
}

#[test]
fn label_count_mismatch_names_counts() {
    let dir = TempDir::new().unwrap();
    let x = write_x(&dir, "x.npy", 3, 2, &[0.0; 6]);
    let m = err(&x, &labels_opts(&dir, &[1, 2]));
    has(&m, &["x.npy", "2 labels for 3 embedding rows", "y.npy"]);
}

#[test]
fn nonfinite_rows_refused_or_dropped() {
    let dir = TempDir::new().unwrap();
    let x = write_x(
        &dir,
        "x.npy",
        4,
        2,
        &[0.0, 1.0, 2.0, f32::NAN, 4.0, 5.0, f32::INFINITY, 7.0],
    );
    let opts = labels_opts(&dir, &[1, 2, 3, 4]);
    has(
        &err(&x, &opts),
        &["x.npy", "row 1", "2 row(s)", "`drop_nonfinite`"],
    );
    let l = read(
        &x,
        &ReadOptions {
            drop_nonfinite: true,
            ..opts
        },
    )
    .unwrap();
    assert_eq!(l.dropped_nonfinite, 2);
    assert_eq!(l.dataset.n_rows(), 2);
    assert_eq!(l.dataset.classes, vec!["1", "3"]);
    assert_eq!(l.dataset.x.row(1).to_vec(), vec![4.0, 5.0]);
}

#[test]
fn shape_and_dtype_refusals() {
    let opts = ReadOptions {
        labels_file: Some(fixture("labels_i16.npy")),
        ..ReadOptions::default()
    };
    has(
        &err(&fixture("x_3d.npy"), &opts),
        &["x_3d.npy", "2-D", "(2, 3, 4)"],
    );
    has(
        &err(&fixture("x_int.npy"), &opts),
        &["x_int.npy", "i32", "float"],
    );
    // Object arrays (written with allow_pickle=True by io_make_fixtures.py) are never unpickled.
    let obj = ReadOptions {
        labels_file: Some(fixture("labels_object.npy")),
        ..ReadOptions::default()
    };
    has(
        &err(&fixture("x_f32.npy"), &obj),
        &["labels_object.npy", "object", "never unpickles"],
    );
    has(
        &err(&fixture("set_object.npz"), &ReadOptions::default()),
        &["set_object.npz", "key 'labels'", "object"],
    );
    let dir = TempDir::new().unwrap();
    let z = write_x(&dir, "zero.npy", 0, 3, &[]);
    has(
        &err(&z, &labels_opts(&dir, &[])),
        &["zero.npy", "zero rows"],
    );
    let z = write_x(&dir, "zerocols.npy", 2, 0, &[]);
    has(
        &err(&z, &labels_opts(&dir, &[1, 2])),
        &["zerocols.npy", "zero columns"],
    );
}

#[test]
fn truncated_and_oversized_npy() {
    let dir = TempDir::new().unwrap();
    let good = fs::read(fixture("x_f32.npy")).unwrap();
    let t = dir.path().join("trunc.npy");
    fs::write(&t, &good[..good.len() - 5]).unwrap();
    let opts = labels_opts(&dir, &[0; 6]);
    has(
        &err(&t, &opts),
        &["trunc.npy", "needs 96 data bytes", "holds 91"],
    );
    let t = dir.path().join("header_cut.npy");
    fs::write(&t, &good[..40]).unwrap();
    has(&err(&t, &opts), &["header_cut.npy", "truncated"]);
    // 10^12 × 10^6 f32 would be 4 EB: must be refused from the header, before any allocation.
    let big = write_x(&dir, "big.npy", 1_000_000_000_000, 1_000_000, &[0.0; 4]);
    has(
        &err(&big, &opts),
        &[
            "big.npy",
            "needs 4000000000000000000 data bytes",
            "holds 16",
        ],
    );
    // A shape whose byte count overflows 64 bits is refused by the checked multiplication.
    let huge = write_x(
        &dir,
        "huge.npy",
        1_000_000_000_000,
        1_000_000_000_000,
        &[0.0; 4],
    );
    has(&err(&huge, &opts), &["huge.npy", "impossibly large"]);
    let big = write_x(&dir, "big2.npy", 1_000_000, 1_000, &[0.0; 4]);
    has(
        &err(&big, &opts),
        &["big2.npy", "needs 4000000000 data bytes", "holds 16"],
    );
    let bad = dir.path().join("bad_magic.npy");
    fs::write(&bad, b"PK\x03\x04 not an array at all").unwrap();
    has(&err(&bad, &opts), &["bad_magic.npy", "magic"]);
}

#[test]
fn csv_errors_name_line_and_column() {
    let dir = TempDir::new().unwrap();
    let cases: [(&str, &str, &[&str]); 6] = [
        (
            "ragged.csv",
            "label,a,b\nx,1,2\ny,3\n",
            &["line 3", "2 fields where the header has 3"],
        ),
        (
            "missing.csv",
            "label,a,b\nx,1,2\ny,,4\n",
            &["line 3, column 'a'", "missing value"],
        ),
        (
            "nonnum.csv",
            "label,a,b\nx,1,2\ny,3,abc\n",
            &["line 3, column 'b'", "'abc' is not a number"],
        ),
        (
            "dup.csv",
            "label,a,a\nx,1,2\n",
            &["column 'a'", "appears twice"],
        ),
        (
            "nolabel.csv",
            "cls,a,b\nx,1,2\n",
            &["no label column 'label'", "cls, a, b", "`label_column`"],
        ),
        ("quote.csv", "label,a\n\"x,1\n", &["line 2", "never closed"]),
    ];
    for (name, text, want) in cases {
        let p = dir.path().join(name);
        fs::write(&p, text).unwrap();
        let m = err(&p, &ReadOptions::default());
        has(&m, &[name]);
        has(&m, want);
    }
    let p = dir.path().join("nan.tsv");
    fs::write(&p, "label\ta\nx\t1\ny\tNaN\n").unwrap();
    has(
        &err(&p, &ReadOptions::default()),
        &["nan.tsv", "row 1, line 3", "`drop_nonfinite`"],
    );
}

fn small_set() -> AugmentedSet {
    AugmentedSet {
        data: Dataset::new(
            Array2::from_elem((2, 2), 1.5),
            vec![0, 1],
            vec!["a".into(), "b".into()],
        ),
        origin: vec!["real".into(), "real".into()],
        parent: vec![0, 1],
        partner: vec![-1, -1],
        weight: vec![0.0, 0.0],
        partner_label: None,
    }
}

#[test]
fn existing_output_refused_without_force() {
    let dir = TempDir::new().unwrap();
    let out = dir.path().join("out.npz");
    fs::write(&out, b"keep me").unwrap();
    let m = write(&out, &small_set(), false).unwrap_err().to_string();
    has(&m, &["out.npz", "already exists", "`force`"]);
    assert_eq!(fs::read(&out).unwrap(), b"keep me");
    write(&out, &small_set(), true).unwrap();
    assert_eq!(
        read(&out, &ReadOptions::default())
            .unwrap()
            .dataset
            .n_rows(),
        2
    );
    assert_eq!(
        fs::read_dir(dir.path()).unwrap().count(),
        1,
        "no temporary file left"
    );
}

#[test]
fn failed_write_leaves_nothing() {
    let dir = TempDir::new().unwrap();
    // Inconsistent provenance length: refused, and no file (temporary or final) appears.
    let mut bad = small_set();
    bad.weight.pop();
    let out = dir.path().join("out.csv");
    has(
        &write(&out, &bad, false).unwrap_err().to_string(),
        &["out.csv", "weight has 1 entries for 2 rows"],
    );
    // HDF5 text cannot hold NUL; with the feature the writer fails midway, without it up front.
    let mut nul = small_set();
    nul.origin[1] = "re\0al".into();
    let out_h5 = dir.path().join("out.h5");
    assert!(write(&out_h5, &nul, false).is_err());
    has(
        &write(&dir.path().join("out.npy"), &small_set(), false)
            .unwrap_err()
            .to_string(),
        &["out.npy", "use .npz"],
    );
    let missing_dir = dir.path().join("nope").join("out.npz");
    has(
        &write(&missing_dir, &small_set(), false)
            .unwrap_err()
            .to_string(),
        &["does not exist"],
    );
    assert_eq!(
        fs::read_dir(dir.path()).unwrap().count(),
        0,
        "nothing left behind"
    );
}

#[cfg(not(feature = "hdf5"))]
#[test]
fn hdf5_without_feature_names_the_feature() {
    has(
        &err(&fixture("set.h5"), &ReadOptions::default()),
        &["set.h5", "no HDF5 support", "the optional `hdf5` feature"],
    );
}

#[cfg(feature = "hdf5")]
#[test]
fn hdf5_missing_dataset_lists_paths() {
    let opts = ReadOptions {
        embeddings_key: "feats/missing".into(),
        ..ReadOptions::default()
    };
    has(
        &err(&fixture("set.h5"), &opts),
        &["set.h5", "key 'feats/missing'", "feats/emb", "meta/labels"],
    );
}
