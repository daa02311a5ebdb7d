//! `embloom inspect`: what is in an embedding file.

use std::path::Path;

use serde::Serialize;

use embloom::data::{Dataset, DatasetStats};
use embloom::error::Result;
use embloom::io::{self, ReadOptions};

#[derive(Debug, Serialize)]
pub struct ClassCount {
    pub name: String,
    pub count: usize,
    /// For a grown file (one with an `origin` per row): the class's real rows.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub real: Option<usize>,
    /// For a grown file: the class's synthetic rows.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub synthetic: Option<usize>,
}

/// The facts `inspect` reports.
#[derive(Debug, Serialize)]
pub struct Inspection {
    pub file: String,
    pub rows: usize,
    pub dims: usize,
    pub dtype: String,
    /// Largest first; ties in class order.
    pub classes: Vec<ClassCount>,
    /// Largest class count ÷ smallest.
    pub imbalance_ratio: f64,
    pub norm_min: f64,
    pub norm_median: f64,
    pub norm_max: f64,
    pub unit_norm: bool,
    pub nonfinite_rows: usize,
    pub first_nonfinite_row: Option<usize>,
    pub duplicate_rows: usize,
    pub has_groups: bool,
    pub has_ids: bool,
    pub has_folds: bool,
    /// Whether rows carry an `origin` (a file embloom grew); only its real rows are data.
    pub grown_file: bool,
    /// False for a `.npy` read without --labels: the rows are described, classes are not.
    pub labelled: bool,
}

impl Inspection {
    pub fn of(file: &Path, ds: &Dataset, origin: Option<&[String]>) -> Inspection {
        // Every file embloom writes carries `origin`; it is a grown file only when some rows
        // are synthetic.
        let origin = origin.filter(|o| o.iter().any(|x| x != "real"));
        let stats = DatasetStats::of(ds);
        let counts = ds.class_counts();
        let mut real = vec![0usize; counts.len()];
        if let Some(origin) = origin {
            for (o, &l) in origin.iter().zip(&ds.labels) {
                if o == "real" {
                    real[l as usize] += 1;
                }
            }
        }
        let mut classes: Vec<ClassCount> = ds
            .classes
            .iter()
            .zip(&counts)
            .enumerate()
            .map(|(i, (n, &c))| ClassCount {
                name: n.clone(),
                count: c,
                real: origin.map(|_| real[i]),
                synthetic: origin.map(|_| c - real[i]),
            })
            .collect();
        classes.sort_by_key(|c| std::cmp::Reverse(c.count));
        let max = classes.first().map_or(0, |c| c.count);
        let min = classes.last().map_or(0, |c| c.count);
        Inspection {
            file: file.display().to_string(),
            rows: stats.rows,
            dims: stats.dims,
            dtype: ds.stored_dtype.clone(),
            classes,
            imbalance_ratio: if min > 0 {
                max as f64 / min as f64
            } else {
                f64::NAN
            },
            norm_min: stats.norm_min,
            norm_median: stats.norm_median,
            norm_max: stats.norm_max,
            unit_norm: stats.unit_norm,
            nonfinite_rows: stats.nonfinite.count,
            first_nonfinite_row: stats.nonfinite.first_row,
            duplicate_rows: stats.duplicate_rows,
            has_groups: ds.groups.is_some(),
            has_ids: ds.ids.is_some(),
            has_folds: ds.folds.is_some(),
            grown_file: origin.is_some(),
            labelled: true,
        }
    }

    /// A human-readable rendering.
    pub fn render(&self) -> String {
        let mut s = String::new();
        s += &format!("{}\n", embloom::report::display_name(&self.file, 4096));
        s += &format!(
            "  rows {}  dims {}  stored as {}\n",
            self.rows, self.dims, self.dtype
        );
        s += &format!(
            "  row norms min {:.4}  median {:.4}  max {:.4}  ({})\n",
            self.norm_min,
            self.norm_median,
            self.norm_max,
            if self.unit_norm {
                "unit-norm"
            } else {
                "not unit-norm"
            }
        );
        match self.first_nonfinite_row {
            Some(r) => {
                s += &format!(
                    "  rows with NaN/Inf: {} (first at row {r})\n",
                    self.nonfinite_rows
                )
            }
            None => s += "  rows with NaN/Inf: 0\n",
        }
        s += &format!("  exact duplicate rows: {}\n", self.duplicate_rows);
        let extras: Vec<&str> = [
            (self.has_ids, "id"),
            (self.has_groups, "group"),
            (self.has_folds, "fold"),
        ]
        .iter()
        .filter(|(h, _)| *h)
        .map(|(_, n)| *n)
        .collect();
        if !extras.is_empty() {
            // The role names every format accepts (the plural spellings are read with a note).
            s += &format!("  carries per row: {}\n", extras.join(", "));
        }
        if !self.labelled {
            s += "  labels: not given (pass --labels FILE.npy to describe the classes)\n";
            return s;
        }
        s += &format!(
            "  {} classes, imbalance ratio {:.1} (largest ÷ smallest)\n",
            self.classes.len(),
            self.imbalance_ratio
        );
        let width = self
            .classes
            .iter()
            .map(|c| embloom::report::table_name(&c.name).chars().count())
            .max()
            .unwrap_or(5)
            .max(5);
        if self.grown_file {
            let real: usize = self.classes.iter().filter_map(|c| c.real).sum();
            s += &format!(
                "  grown file: {real} real and {} synthetic rows; assess and sweep use the real rows only\n",
                self.rows - real
            );
        }
        for c in &self.classes {
            s += &format!(
                "    {:<width$}  {:>7}  {:5.1}%",
                embloom::report::table_name(&c.name),
                c.count,
                100.0 * c.count as f64 / self.rows.max(1) as f64
            );
            if let (Some(r), Some(n)) = (c.real, c.synthetic) {
                s += &format!("  real {r:>7}  synthetic {n:>7}");
            }
            s.push('\n');
        }
        s
    }
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
        let n = x.nrows();
        let mut ds = Dataset::new(x, vec![0; n], vec![String::new()]);
        ds.stored_dtype = dtype;
        let mut report = Inspection::of(path, &ds, None);
        report.labelled = false;
        report.classes.clear();
        report.imbalance_ratio = f64::NAN;
        report
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
        print!("{}", report.render());
    }
    Ok(())
}
