//! The in-memory embedding set every reader produces and every later stage consumes.
//!
//! Records and targets travel together (as in linfa's `DatasetBase`) so that a row subset can
//! never lose its labels, groups or fold assignment on the way through the pipeline.

mod labels;
mod row_index;
mod stats;

pub use labels::{RawLabels, encode_labels};
pub use row_index::RowIndex;
pub use stats::{DatasetStats, NonFinite, UNIT_NORM_TOL, is_unit_norm};

use ndarray::{Array2, ArrayView2, Axis};

/// An embedding matrix with one class index per row.
#[derive(Debug, Clone)]
pub struct Dataset {
    /// n × d, row-major, f32.
    pub x: Array2<f32>,
    /// Class index per row, into `classes`.
    pub labels: Vec<u32>,
    /// Class names in numpy `unique` order (numeric for integer labels, else lexicographic).
    pub classes: Vec<String>,
    /// Optional row identifiers (carried to outputs).
    pub ids: Option<Vec<String>>,
    /// Optional group per row (rows of one group never straddle train and test).
    pub groups: Option<Vec<String>>,
    /// Optional given fold per row.
    pub folds: Option<Vec<i64>>,
    /// The element type as stored in the file ("f32", "f16", "f64", "i64", ...).
    pub stored_dtype: String,
}

impl Dataset {
    /// A dataset from a matrix and class indices; the caller guarantees `labels.len() == rows`.
    pub fn new(x: Array2<f32>, labels: Vec<u32>, classes: Vec<String>) -> Self {
        debug_assert_eq!(x.nrows(), labels.len());
        Dataset {
            x,
            labels,
            classes,
            ids: None,
            groups: None,
            folds: None,
            stored_dtype: "f32".into(),
        }
    }

    /// Number of rows of the matrix, which is also the number of labels.
    pub fn n_rows(&self) -> usize {
        self.x.nrows()
    }

    /// Embedding width, shared by every row.
    pub fn dims(&self) -> usize {
        self.x.ncols()
    }

    /// Number of class names; a class may have no rows (after a split, say), so this is not
    /// the number of distinct labels.
    pub fn n_classes(&self) -> usize {
        self.classes.len()
    }

    /// Row count per class index.
    pub fn class_counts(&self) -> Vec<usize> {
        let mut counts = vec![0usize; self.classes.len()];
        for &l in &self.labels {
            counts[l as usize] += 1;
        }
        counts
    }

    /// Indices of the rows of class `c`, in row order.
    pub fn rows_of_class(&self, c: u32) -> Vec<usize> {
        self.rows_by_class(&[c]).remove(&c).unwrap_or_default()
    }

    /// Indices of the rows of each class in `classes`, in row order, found in one pass over
    /// the labels (fitting many classes would otherwise scan them once per class). Every
    /// asked-for class has an entry, empty when it has no rows.
    pub fn rows_by_class(&self, classes: &[u32]) -> std::collections::BTreeMap<u32, Vec<usize>> {
        let mut rows: std::collections::BTreeMap<u32, Vec<usize>> =
            classes.iter().map(|&c| (c, Vec::new())).collect();
        for (i, l) in self.labels.iter().enumerate() {
            if let Some(r) = rows.get_mut(l) {
                r.push(i);
            }
        }
        rows
    }

    /// Class index of a class name.
    pub fn class_index(&self, name: &str) -> Option<u32> {
        self.classes
            .iter()
            .position(|c| c == name)
            .map(|i| i as u32)
    }

    /// A view of the matrix.
    pub fn view(&self) -> ArrayView2<'_, f32> {
        self.x.view()
    }

    /// A new dataset holding `rows` (in that order); class names and indices are kept as they
    /// are, so labels of a subset stay comparable with the full set.
    pub fn select(&self, rows: &[usize]) -> Dataset {
        let pick = |v: &Option<Vec<String>>| {
            v.as_ref()
                .map(|v| rows.iter().map(|&i| v[i].clone()).collect())
        };
        Dataset {
            x: self.x.select(Axis(0), rows),
            labels: rows.iter().map(|&i| self.labels[i]).collect(),
            classes: self.classes.clone(),
            ids: pick(&self.ids),
            groups: pick(&self.groups),
            folds: self
                .folds
                .as_ref()
                .map(|f| rows.iter().map(|&i| f[i]).collect()),
            stored_dtype: self.stored_dtype.clone(),
        }
    }
}
