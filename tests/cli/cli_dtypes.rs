//! `embloom grow` keeps the input's float type (f64 stays f64, f16 stays f16) with real rows
//! bit-identical, writes `source_row` in every format, and spells the role keys `id` and
//! `group` with their integer type kept. Inputs are written by
//! tests/reference/io_make_dtypes.py; outputs are checked by numpy, safetensors and h5py in
//! tests/reference/io_check_dtypes.py, and by reading them back with embloom.

use std::path::{Path, PathBuf};
use std::process::Command;

use crate::common;

use common::*;
use embloom::FloatType;
use embloom::io::{ReadOptions, read};

fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/io/dtypes")
        .join(name)
}

fn labels_for(input: &Path) -> Option<PathBuf> {
    (input.extension().is_some_and(|e| e == "npy")).then(|| fixture("labels.npy"))
}

/// Grows `input` (class 1 up to the largest class, non-finite rows dropped) into `out`.
fn grow(input: &Path, out: &Path) -> String {
    let mut args = vec![
        "grow".to_string(),
        input.display().to_string(),
        "-o".into(),
        out.display().to_string(),
        "--method".into(),
        "interpolate".into(),
        "--target".into(),
        "largest".into(),
        "--drop-nonfinite".into(),
        "--seed".into(),
        "5".into(),
    ];
    if let Some(l) = labels_for(input) {
        args.extend(["--labels".into(), l.display().to_string()]);
    }
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    let o = embloom(&args, &[]);
    assert!(o.status.success(), "{}: {}", input.display(), stderr(&o));
    stderr(&o)
}

fn binary_outputs() -> Vec<&'static str> {
    let mut e = vec!["npz", "safetensors"];
    if cfg!(feature = "hdf5") {
        e.push("h5");
    }
    e
}

fn inputs() -> Vec<String> {
    let mut v = Vec::new();
    for t in ["f64", "f16"] {
        v.push(format!("x_{t}.npy"));
        for ext in binary_outputs() {
            v.push(format!("set_{t}.{ext}"));
        }
    }
    v
}

/// Rows of the fixture matrix that are finite (io_make_dtypes.py puts NaN in row 2, +inf in row 6).
const KEPT: [usize; 8] = [0, 1, 3, 4, 5, 7, 8, 9];

#[test]
fn grow_keeps_dtype_bits_source_rows_and_integer_roles() {
    let dir = tempdir();
    let mut pairs = Vec::new();
    for name in inputs() {
        let input = fixture(&name);
        for ext in binary_outputs() {
            let out = p(dir.path(), &format!("{}.{ext}", name.replace('.', "_")));
            let said = grow(&input, &out);
            // The f16 npz and safetensors inputs use the old key names, read with a note.
            let legacy = name.starts_with("set_f16.") && !name.ends_with(".h5");
            assert_eq!(said.contains("key 'groups'"), legacy, "{name}: {said}");
            pairs.push((input.clone(), out));
        }
    }
    // Read back with embloom (common practice, no source): same float type, real rows'
    // values bit for bit, integer roles.
    for (input, out) in &pairs {
        let opts = ReadOptions {
            labels_file: labels_for(input),
            keep_nonfinite: true,
            ..ReadOptions::default()
        };
        let a = read(input, &opts).unwrap().dataset;
        let b = read(out, &ReadOptions::default()).unwrap().dataset;
        let what = format!("{} -> {}", input.display(), out.display());
        assert_eq!(b.float_type, a.float_type, "{what}");
        assert_eq!(b.stored_dtype, a.stored_dtype, "{what}");
        assert!(b.n_rows() > KEPT.len(), "{what}: synthetic rows written");
        for (r, &i) in KEPT.iter().enumerate() {
            for j in 0..a.dims() {
                let (want, got) = match (&a.x_f64, &b.x_f64) {
                    (Some(x), Some(y)) => (x[[i, j]].to_bits(), y[[r, j]].to_bits()),
                    (None, None) => (
                        u64::from(a.x[[i, j]].to_bits()),
                        u64::from(b.x[[r, j]].to_bits()),
                    ),
                    _ => panic!("{what}: f64 values on one side only"),
                };
                assert_eq!(got, want, "{what}: real row {r} column {j}");
            }
        }
        if input.extension().is_some_and(|e| e != "npy") {
            assert!(b.int_ids && b.int_groups, "{what}");
        }
    }
    if a_python_with_numpy() {
        // Source: numpy / safetensors / h5py reading input and output (io_check_dtypes.py).
        let script =
            Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/reference/io_check_dtypes.py");
        let mut cmd = Command::new("python3");
        cmd.arg(script);
        for (i, o) in &pairs {
            cmd.arg(i).arg(o);
        }
        let out = cmd.output().unwrap();
        assert!(
            out.status.success(),
            "{}\n{}",
            String::from_utf8_lossy(&out.stdout),
            String::from_utf8_lossy(&out.stderr)
        );
    }
}

fn a_python_with_numpy() -> bool {
    let ok = Command::new("python3")
        .args(["-c", "import numpy, safetensors, h5py"])
        .output()
        .is_ok_and(|o| o.status.success());
    if !ok {
        assert!(
            std::env::var("CI").map_or(true, |v| v != "true"),
            "CI=true but python3 with numpy, safetensors and h5py is missing"
        );
        eprintln!("skipping the Python check: python3 with numpy not found");
    }
    ok
}

#[test]
fn csv_output_carries_source_row_and_reads_back_without_it_as_a_feature() {
    // The index of each real row in the input file, after --drop-nonfinite compacted them;
    // a synthetic row carries its parent's (common practice, no source: a join key).
    let dir = tempdir();
    let out = p(dir.path(), "out.csv");
    grow(&fixture("set_f64.npz"), &out);
    let text = std::fs::read_to_string(&out).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |n: &str| header.iter().position(|h| *h == n).unwrap();
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    let (source, parent, origin) = (col("source_row"), col("parent"), col("origin"));
    let n_real = KEPT.len();
    for (r, row) in rows.iter().enumerate() {
        if r < n_real {
            assert_eq!(row[origin], "real");
            assert_eq!(row[source], KEPT[r].to_string(), "real row {r}");
        } else {
            let par: usize = row[parent].parse().unwrap();
            assert_eq!(row[source], KEPT[par].to_string(), "synthetic row {r}");
        }
    }
    assert!(rows.len() > n_real);
    // Integer ids and groups: synthetic rows have none, written -1.
    assert_eq!(rows[n_real][col("group")], "-1");
    assert_eq!(rows[n_real][col("id")], "-1");
    let back = read(&out, &ReadOptions::default()).unwrap().dataset;
    assert_eq!(back.dims(), 3, "source_row is not read as a feature");
}

#[test]
fn f64_to_csv_reads_back_to_the_same_f32_matrix() {
    // CSV output of f64 input writes the shortest f64 text of each value (checked in
    // tests/library/io_table_text.rs); a CSV is read into f32, so reading it back gives the
    // input's f32 matrix exactly; common practice, no source.
    let dir = tempdir();
    let out = p(dir.path(), "out.csv");
    grow(&fixture("x_f64.npy"), &out);
    let back = read(&out, &ReadOptions::default()).unwrap().dataset;
    let opts = ReadOptions {
        labels_file: Some(fixture("labels.npy")),
        drop_nonfinite: true,
        ..ReadOptions::default()
    };
    let a = read(&fixture("x_f64.npy"), &opts).unwrap().dataset;
    assert_eq!(back.float_type, FloatType::F32);
    for r in 0..a.n_rows() {
        assert_eq!(back.x.row(r), a.x.row(r));
    }
}
