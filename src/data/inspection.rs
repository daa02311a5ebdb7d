//! What is in an embedding set: its shape, storage, classes, row norms and the problems a user
//! should know of before growing or assessing it (non-finite rows, exact duplicates). The
//! binary's `inspect` prints this value (as text or JSON) and the Python module returns it as
//! a dict, so both faces report the same facts from the same computation.

use std::path::Path;

use serde::Serialize;

use super::{Dataset, DatasetStats};

/// One class's row count.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ClassCount {
    /// The class name.
    pub name: String,
    /// Rows of the class (real and synthetic).
    pub count: usize,
    /// For a grown file (one with an `origin` per row): the class's real rows.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub real: Option<usize>,
    /// For a grown file: the class's synthetic rows.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub synthetic: Option<usize>,
}

/// The facts `inspect` reports. Field names are the JSON keys, so they are part of the
/// output format: rename none of them.
#[derive(Debug, Clone, Serialize)]
pub struct Inspection {
    /// The file inspected, as given (or a name for in-memory rows).
    pub file: String,
    /// Number of rows.
    pub rows: usize,
    /// Number of dimensions.
    pub dims: usize,
    /// The element type as stored ("f32", "f16", ...).
    pub dtype: String,
    /// Largest first; ties in class order.
    pub classes: Vec<ClassCount>,
    /// Largest class count ÷ smallest (NaN without labels).
    pub imbalance_ratio: f64,
    /// Smallest row L2 norm.
    pub norm_min: f64,
    /// Median row L2 norm.
    pub norm_median: f64,
    /// Largest row L2 norm.
    pub norm_max: f64,
    /// Whether every row has unit norm (within the library's tolerance).
    pub unit_norm: bool,
    /// Rows holding NaN or ±Inf.
    pub nonfinite_rows: usize,
    /// The first such row, if any.
    pub first_nonfinite_row: Option<usize>,
    /// Rows that exactly repeat an earlier row.
    pub duplicate_rows: usize,
    /// Whether rows carry a group.
    pub has_groups: bool,
    /// Whether rows carry an id.
    pub has_ids: bool,
    /// Whether rows carry a given fold.
    pub has_folds: bool,
    /// Whether rows carry an `origin` (a file embloom grew); only its real rows are data.
    pub grown_file: bool,
    /// False for rows read without labels: the rows are described, classes are not.
    pub labelled: bool,
}

impl Inspection {
    /// Inspect `ds`, read from `file`; `origin` is the file's per-row origin column, if any.
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

    /// Inspect rows that came without labels (a `.npy` matrix alone): everything but the
    /// classes, which are left empty with a NaN imbalance ratio.
    pub fn of_unlabelled(file: &Path, x: ndarray::Array2<f32>, dtype: String) -> Inspection {
        let n = x.nrows();
        let mut ds = Dataset::new(x, vec![0; n], vec![String::new()]);
        ds.stored_dtype = dtype;
        let mut report = Inspection::of(file, &ds, None);
        report.labelled = false;
        report.classes.clear();
        report.imbalance_ratio = f64::NAN;
        report
    }
}
