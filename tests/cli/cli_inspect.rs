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
