//! `embloom inspect`: what is in an embedding file.

use std::path::Path;

use embloom::data::Inspection;
use embloom::error::Result;
use embloom::io::{self, ReadOptions};

/// A human-readable rendering of an inspection.
pub fn render(r: &Inspection) -> String {
    let mut s = String::new();
    s += &format!("{}\n", embloom::report::display_name(&r.file, 4096));
    s += &format!(
        "  rows {}  dims {}  stored as {}\n",
        r.rows, r.dims, r.dtype
    );
    s += &format!(
        "  row norms min {:.4}  median {:.4}  max {:.4}  ({})\n",
        r.norm_min,
        r.norm_median,
        r.norm_max,
        if r.unit_norm {
            "unit-norm"
        } else {
            "not unit-norm"
        }
    );
    match r.first_nonfinite_row {
        Some(first) => {
            s += &format!(
                "  rows with NaN/Inf: {} (first at row {first})\n",
                r.nonfinite_rows
            )
        }
        None => s += "  rows with NaN/Inf: 0\n",
    }
    s += &format!("  exact duplicate rows: {}\n", r.duplicate_rows);
    let extras: Vec<&str> = [
        (r.has_ids, "id"),
        (r.has_groups, "group"),
        (r.has_folds, "fold"),
    ]
    .iter()
    .filter(|(h, _)| *h)
    .map(|(_, n)| *n)
    .collect();
    if !extras.is_empty() {
        // The role names every format accepts (the plural spellings are read with a note).
        s += &format!("  carries per row: {}\n", extras.join(", "));
    }
    if !r.labelled {
        s += "  labels: not given (pass --labels FILE.npy to describe the classes)\n";
        return s;
    }
    s += &format!(
        "  {} classes, imbalance ratio {:.1} (largest ÷ smallest)\n",
        r.classes.len(),
        r.imbalance_ratio
    );
    let width = r
        .classes
        .iter()
        .map(|c| embloom::report::table_name(&c.name).chars().count())
        .max()
        .unwrap_or(5)
        .max(5);
    if r.grown_file {
        let real: usize = r.classes.iter().filter_map(|c| c.real).sum();
        s += &format!(
            "  grown file: {real} real and {} synthetic rows; assess and sweep use the real rows only\n",
            r.rows - real
        );
    }
    for c in &r.classes {
        s += &format!(
            "    {:<width$}  {:>7}  {:5.1}%",
            embloom::report::table_name(&c.name),
            c.count,
            100.0 * c.count as f64 / r.rows.max(1) as f64
        );
        if let (Some(r), Some(n)) = (c.real, c.synthetic) {
            s += &format!("  real {r:>7}  synthetic {n:>7}");
        }
        s.push('\n');
    }
    s
}

/// Run `inspect` on `path`. Non-finite rows are counted, not refused.
pub fn inspect(path: &Path, read: &ReadOptions, json: bool) -> Result<()> {
    let mut read = read.clone();
    read.keep_nonfinite = true;
    let is_npy = path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("npy"));
    let report = if is_npy && read.labels_file.is_none() {
        let (x, dtype) = io::read_unlabelled_npy(path)?;
        Inspection::of_unlabelled(path, x, dtype)
    } else {
        let loaded = io::read(path, &read)?;
        for n in &loaded.notes {
            eprintln!("note: {n}");
        }
        Inspection::of(path, &loaded.dataset, loaded.origin.as_deref())
    };
    if json {
        println!(
            "{}",
            serde_json::to_string_pretty(&report).expect("inspection serialises")
        );
    } else {
        print!("{}", render(&report));
    }
    Ok(())
}
