//! Helpers shared by the CLI integration tests: run the binary, make small input files.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// Run the embloom binary with `args` (and extra environment).
pub fn embloom(args: &[&str], env: &[(&str, &str)]) -> Output {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_embloom"));
    cmd.args(args);
    for (k, v) in env {
        cmd.env(k, v);
    }
    cmd.output().expect("the embloom binary runs")
}

pub fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

pub fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// A reproducible pseudo-random value in [-1, 1) (a property-test input, not a figure).
pub fn value(i: usize, j: usize, seed: u64) -> f32 {
    let mut z = (i as u64).wrapping_mul(0x9e37_79b9_7f4a_7c15)
        ^ (j as u64).wrapping_mul(0xbf58_476d_1ce4_e5b9)
        ^ seed;
    z ^= z >> 31;
    z = z.wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^= z >> 29;
    ((z >> 40) as f32 / (1u64 << 24) as f32) * 2.0 - 1.0
}

/// Write a CSV with `counts[c]` rows of class `c{c}` (class mean offset by c), `dims` features.
pub fn write_csv(path: &Path, counts: &[usize], dims: usize, seed: u64) {
    let mut s = String::from("label");
    for j in 0..dims {
        s += &format!(",f{j}");
    }
    s += "\n";
    let mut row = 0;
    for (c, &n) in counts.iter().enumerate() {
        for _ in 0..n {
            s += &format!("c{c}");
            for j in 0..dims {
                let centre = if j % counts.len() == c { 2.0 } else { 0.0 };
                s += &format!(",{}", centre + value(row, j, seed));
            }
            s += "\n";
            row += 1;
        }
    }
    std::fs::write(path, s).expect("temp file writes");
}

/// A fresh temporary folder.
pub fn tempdir() -> tempfile::TempDir {
    tempfile::tempdir().expect("temp dir")
}

pub fn p(dir: &Path, name: &str) -> PathBuf {
    dir.join(name)
}

/// No file or folder in `dir` other than `keep`.
pub fn only_these(dir: &Path, keep: &[&str]) -> bool {
    std::fs::read_dir(dir)
        .expect("dir lists")
        .filter_map(|e| e.ok())
        .all(|e| keep.contains(&e.file_name().to_string_lossy().as_ref()))
}

/// The bytes of a little-endian `.npy` (version 1.0, C order) of `shape` with `descr`
/// (`<f4`, `<i8`) from the raw element bytes, as numpy's format specification lays it out.
pub fn npy_bytes(descr: &str, shape: &[usize], body: &[u8]) -> Vec<u8> {
    let dims: Vec<String> = shape.iter().map(|d| d.to_string()).collect();
    let shape = if dims.len() == 1 {
        format!("({},)", dims[0])
    } else {
        format!("({})", dims.join(", "))
    };
    let mut header = format!("{{'descr': '{descr}', 'fortran_order': False, 'shape': {shape}, }}");
    while (10 + header.len() + 1) % 64 != 0 {
        header.push(' ');
    }
    header.push('\n');
    let mut bytes = b"\x93NUMPY\x01\x00".to_vec();
    bytes.extend((header.len() as u16).to_le_bytes());
    bytes.extend(header.as_bytes());
    bytes.extend(body);
    bytes
}

/// Write a `.npy` file (see [`npy_bytes`]).
pub fn write_npy(path: &Path, descr: &str, shape: &[usize], body: &[u8]) {
    std::fs::write(path, npy_bytes(descr, shape, body)).unwrap();
}

/// Write an uncompressed `.npz` (a zip of `.npy` members, as `numpy.savez` writes it) from
/// (member name, `.npy` bytes) pairs.
pub fn write_npz(path: &Path, members: &[(&str, Vec<u8>)]) {
    use std::io::Write;
    let mut z = zip::ZipWriter::new(std::fs::File::create(path).unwrap());
    let opts =
        zip::write::SimpleFileOptions::default().compression_method(zip::CompressionMethod::Stored);
    for (name, bytes) in members {
        z.start_file(format!("{name}.npy"), opts).unwrap();
        z.write_all(bytes).unwrap();
    }
    z.finish().unwrap();
}

/// `embloom grow INPUT -o OUT ARGS...`, the shape of most grow runs in the tests.
pub fn grow_file(input: impl AsRef<Path>, out: impl AsRef<Path>, args: &[&str]) -> Output {
    let (input, out) = (input.as_ref(), out.as_ref());
    let mut all = vec!["grow", input.to_str().unwrap(), "-o", out.to_str().unwrap()];
    all.extend_from_slice(args);
    embloom(&all, &[])
}

/// `embloom assess INPUT ARGS...`.
pub fn assess_file(input: impl AsRef<Path>, args: &[&str]) -> Output {
    let mut all = vec!["assess", input.as_ref().to_str().unwrap()];
    all.extend_from_slice(args);
    embloom(&all, &[])
}

/// A JSON array of rows (a reference script's fixture) as an f32 matrix.
pub fn json_matrix(v: &serde_json::Value) -> ndarray::Array2<f32> {
    let rows: Vec<Vec<f32>> = v
        .as_array()
        .unwrap()
        .iter()
        .map(|r| {
            r.as_array()
                .unwrap()
                .iter()
                .map(|x| x.as_f64().unwrap() as f32)
                .collect()
        })
        .collect();
    let (n, d) = (rows.len(), rows.first().map_or(0, Vec::len));
    ndarray::Array2::from_shape_vec((n, d), rows.concat()).unwrap()
}

/// Runs the binary with `args` (a command that prints JSON), requires success and parses stdout.
pub fn run_json(args: &[&str]) -> serde_json::Value {
    let o = embloom(args, &[]);
    assert!(o.status.success(), "{args:?}: {}", stderr(&o));
    serde_json::from_str(&stdout(&o)).unwrap()
}

/// Requires results.json to hold summary rows for `method`, each with a finite mean.
pub fn assert_finite_summary(v: &serde_json::Value, method: &str) {
    let rows: Vec<&serde_json::Value> = v["summary"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|r| r["method"] == method)
        .collect();
    assert!(!rows.is_empty(), "no summary rows for {method}");
    assert!(
        rows.iter()
            .all(|r| r["mean"].as_f64().is_some_and(f64::is_finite)),
        "{method}: a mean is not finite"
    );
}
