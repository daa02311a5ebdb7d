//! Table text through the library: f64 values written as f64 text, and a table that changed
//! on disk between reading and writing refused rather than copied from the wrong bytes.
//! Expected values come from Rust's shortest round-trip float formatting and the tables
//! written here (common practice, no source).

use embloom::io::{AugmentedSet, ReadOptions, read, write};
use embloom::{Dataset, FloatType};
use ndarray::Array2;

#[test]
fn f64_values_are_written_as_the_shortest_f64_text() {
    // 0.1 + 1e-12 is 0.1 in f32: f32 text would lose the input's value.
    let x64 = Array2::from_shape_vec((2, 2), vec![0.1 + 1e-12, -2.5, 1.0 / 3.0, 7.0]).unwrap();
    let mut d = Dataset::new(
        x64.mapv(|v| v as f32),
        vec![0, 1],
        vec!["a".into(), "b".into()],
    );
    d.float_type = FloatType::F64;
    d.x_f64 = Some(x64.clone());
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("f64.csv");
    write(&out, &AugmentedSet::all_real(d), false).unwrap();
    let text = std::fs::read_to_string(&out).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let f0 = header.iter().position(|h| *h == "f0").unwrap();
    for (i, line) in lines.enumerate() {
        let cells: Vec<&str> = line.split(',').collect();
        for j in 0..2 {
            let v: f64 = cells[f0 + j].parse().unwrap();
            assert_eq!(v.to_bits(), x64[[i, j]].to_bits(), "{line}");
            assert_eq!(cells[f0 + j], x64[[i, j]].to_string(), "{line}");
        }
    }
}

#[test]
fn a_table_changed_after_reading_is_refused_when_its_rows_are_copied() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("in.csv");
    std::fs::write(&input, "label,a\nx,1\ny,2\nx,3\n").unwrap();
    let loaded = read(&input, &ReadOptions::default()).unwrap();
    // The same rows, one byte longer: the offsets kept at reading no longer fit.
    std::fs::write(&input, "label,a\nx,10\ny,2\nx,3\n").unwrap();
    let out = dir.path().join("out.csv");
    let err = write(&out, &AugmentedSet::all_real(loaded.dataset), false)
        .unwrap_err()
        .to_string();
    assert!(err.contains("in.csv") && err.contains("changed"), "{err}");
    assert!(!out.exists(), "nothing is left under the output name");
}
