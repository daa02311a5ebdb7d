//! `embloom inspect` on small files whose facts are known by construction.

use crate::common;

use common::*;

#[test]
fn json_fields() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    // 3 classes; rows 0 and 1 duplicated on purpose, row 4 has a NaN.
    let s = "label,f0,f1\na,3,4\na,3,4\nb,0,1\nb,1,0\nc,nan,1\na,6,8\n";
    std::fs::write(&input, s).unwrap();
    let o = embloom(&["inspect", input.to_str().unwrap(), "--json"], &[]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(v["rows"], 6);
    assert_eq!(v["dims"], 2);
    assert_eq!(v["classes"][0]["name"], "a");
    assert_eq!(v["classes"][0]["count"], 3);
    assert_eq!(v["nonfinite_rows"], 1);
    assert_eq!(v["first_nonfinite_row"], 4);
    assert_eq!(v["duplicate_rows"], 1);
    assert_eq!(v["unit_norm"], false);
    // Norms (from memory: |(3,4)| = 5, |(6,8)| = 10): min 1, max 10.
    assert_eq!(v["norm_min"], 1.0);
    assert_eq!(v["norm_max"], 10.0);
    assert_eq!(v["imbalance_ratio"], 3.0);
    let o = embloom(&["inspect", input.to_str().unwrap()], &[]);
    assert!(stdout(&o).contains("first at row 4"), "{}", stdout(&o));
}

#[test]
fn a_grown_file_shows_real_and_synthetic_counts_per_class() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[20, 6], 3, 8);
    let grown = p(dir.path(), "grown.npz");
    let o = grow_file(
        &input,
        &grown,
        &["--method", "interpolate", "--target", "largest", "--quiet"],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let o = embloom(&["inspect", grown.to_str().unwrap(), "--json"], &[]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(v["grown_file"], true);
    // The grow plan: the 6-row class is brought up to the largest, 20.
    for c in v["classes"].as_array().unwrap() {
        assert_eq!(c["count"], 20, "{c}");
        let expected_real = if c["synthetic"] == 0 { 20 } else { 6 };
        assert_eq!(c["real"], expected_real, "{c}");
    }
    let o = embloom(&["inspect", grown.to_str().unwrap()], &[]);
    let text = stdout(&o);
    assert!(text.contains("26 real and 14 synthetic rows"), "{text}");
    assert!(text.contains("synthetic      14"), "{text}");
}

#[test]
fn a_file_embloom_wrote_with_only_real_rows_is_not_called_grown() {
    // Every embloom export carries `origin`; growing with `none` adds no synthetic row.
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_csv(&input, &[20, 6], 3, 8);
    let out = p(dir.path(), "same.npz");
    let o = grow_file(&input, &out, &["--method", "none", "--quiet"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let o = embloom(&["inspect", out.to_str().unwrap()], &[]);
    let text = stdout(&o);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(!text.contains("grown file"), "{text}");
}

/// A little-endian f32 `.npy` of two columns.
fn write_npy2(path: &std::path::Path, rows: &[[f32; 2]]) {
    let body: Vec<u8> = rows
        .iter()
        .flatten()
        .flat_map(|v| v.to_le_bytes())
        .collect();
    write_npy(path, "<f4", &[rows.len(), 2], &body);
}

#[test]
fn an_npy_without_labels_is_described_and_says_so() {
    let dir = tempdir();
    let npy = p(dir.path(), "x.npy");
    // Rows 0 and 2 are the same; row 3 holds a NaN; norms 5, 1, 5 (and NaN).
    write_npy2(&npy, &[[3.0, 4.0], [1.0, 0.0], [3.0, 4.0], [f32::NAN, 1.0]]);
    let o = embloom(&["inspect", npy.to_str().unwrap(), "--json"], &[]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(v["rows"], 4);
    assert_eq!(v["dims"], 2);
    assert_eq!(v["labelled"], false);
    assert_eq!(v["nonfinite_rows"], 1);
    assert_eq!(v["duplicate_rows"], 1);
    assert_eq!(v["norm_max"], 5.0);
    let o = embloom(&["inspect", npy.to_str().unwrap()], &[]);
    assert!(stdout(&o).contains("labels: not given"), "{}", stdout(&o));
}
