//! The report folder's confusion counts and per-class figures, read back from the files.

use crate::common::{embloom, p, stderr, tempdir, write_csv};

/// Rows of a small CSV of the report folder as header → value maps.
fn csv_rows(text: &str) -> Vec<std::collections::HashMap<String, String>> {
    let mut r = csv::Reader::from_reader(text.as_bytes());
    let header: Vec<String> = r.headers().unwrap().iter().map(String::from).collect();
    r.records()
        .map(|rec| {
            header
                .iter()
                .cloned()
                .zip(rec.unwrap().iter().map(String::from))
                .collect()
        })
        .collect()
}

#[test]
fn confusion_counts_sum_to_the_test_rows_and_agree_with_precision_and_the_csv() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    // 3 classes, 60 rows in all.
    write_csv(&input, &[30, 18, 12], 4, 11);
    let report = p(dir.path(), "rep");
    let run = |repeats: &str, interval: &str| -> serde_json::Value {
        let _ = std::fs::remove_dir_all(&report);
        let o = embloom(
            &[
                "assess",
                input.to_str().unwrap(),
                "--probes",
                "knn",
                "--methods",
                "interpolate,extrapolate",
                "--folds",
                "3",
                "--repeats",
                repeats,
                "--interval",
                interval,
                "--no-diagnostics",
                "--quiet",
                "--report",
                report.to_str().unwrap(),
            ],
            &[],
        );
        assert!(o.status.success(), "{}", stderr(&o));
        serde_json::from_str(&std::fs::read_to_string(report.join("results.json")).unwrap())
            .unwrap()
    };

    // Each repeat tests every row once, so a matrix summed over the repeats' folds holds
    // rows × repeats (the stratified split's definition).
    let v = run("2", "corrected-t");
    let matrices = v["confusion"].as_array().unwrap();
    assert_eq!(matrices.len(), 3, "none, interpolate, extrapolate with knn");
    for m in matrices {
        let total: u64 = m["cells"]
            .as_array()
            .unwrap()
            .iter()
            .map(|c| c[2].as_u64().unwrap())
            .sum();
        assert_eq!(total, 120, "{m}");
        assert_eq!(m["test_rows"], 120);
    }

    // One repeat and a row-level interval: the pooled precision of a class is its diagonal
    // cell over its column's sum (the definition of precision), and recall its diagonal over
    // its row's sum.
    let v = run("1", "cv-clt");
    let classes: Vec<&str> = v["input"]["classes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c.as_str().unwrap())
        .collect();
    let changes = csv_rows(&std::fs::read_to_string(report.join("confusion_changes.csv")).unwrap());
    let json_changes = v["confusion_changes"].as_array().unwrap();
    assert_eq!(changes.len(), json_changes.len());
    for m in v["confusion"].as_array().unwrap() {
        let n = classes.len();
        let mut cm = vec![vec![0u64; n]; n];
        for c in m["cells"].as_array().unwrap() {
            cm[c[0].as_u64().unwrap() as usize][c[1].as_u64().unwrap() as usize] =
                c[2].as_u64().unwrap();
        }
        for (k, name) in classes.iter().enumerate() {
            let row = v["per_class"]
                .as_array()
                .unwrap()
                .iter()
                .find(|r| r["method"] == m["method"] && r["class"] == *name)
                .unwrap();
            let column: u64 = (0..n).map(|t| cm[t][k]).sum();
            let own: u64 = cm[k].iter().sum();
            if column > 0 {
                let precision = cm[k][k] as f64 / column as f64;
                assert!(
                    (row["precision_pooled"].as_f64().unwrap() - precision).abs() < 1e-12,
                    "{row}"
                );
            }
            let recall = cm[k][k] as f64 / own as f64;
            assert!(
                (row["recall_mean"].as_f64().unwrap() - recall).abs() < 1e-12,
                "{row}"
            );
            if m["method"] != "none" {
                for key in ["precision_delta_mean", "f1_delta_mean", "f1_p_value"] {
                    assert!(row.get(key).is_some(), "{key} missing: {row}");
                }
            }
        }
        // Every listed change is the method's cell minus none's, off the diagonal, and the
        // CSV lists the same rows as results.json.
        let none = v["confusion"].as_array().unwrap()[0]["cells"].clone();
        let cell = |cells: &serde_json::Value, t: usize, p: usize| -> i64 {
            cells
                .as_array()
                .unwrap()
                .iter()
                .find(|c| c[0] == t && c[1] == p)
                .map_or(0, |c| c[2].as_i64().unwrap())
        };
        for (c, row) in json_changes.iter().zip(&changes) {
            if c["method"] != m["method"] {
                continue;
            }
            let t = classes.iter().position(|x| c["true_class"] == *x).unwrap();
            let p = classes
                .iter()
                .position(|x| c["predicted_class"] == *x)
                .unwrap();
            assert_ne!(t, p);
            assert_eq!(c["count"].as_i64().unwrap(), cell(&m["cells"], t, p));
            assert_eq!(c["baseline_count"].as_i64().unwrap(), cell(&none, t, p));
            assert_eq!(
                c["change"].as_i64().unwrap(),
                cell(&m["cells"], t, p) - cell(&none, t, p)
            );
            assert_eq!(row["change"], c["change"].to_string());
            assert_eq!(row["true_class"], c["true_class"].as_str().unwrap());
        }
    }
}
