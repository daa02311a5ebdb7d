//! The in-memory embedding set every reader produces and every later stage consumes.
//!
//! Records and targets travel together (as in linfa's `DatasetBase`) so that a row subset can
//! never lose its labels, groups or fold assignment on the way through the pipeline.

mod inspection;
mod labels;
mod row_index;
mod rows;
mod soft_label;
mod stats;
mod subset;

pub use inspection::{ClassCount, Inspection};
pub use labels::{RawLabels, encode_labels};
pub use row_index::RowIndex;
pub use rows::Rows;
pub use soft_label::{SoftLabel, SoftLabels, after_hard, append_soft};
pub use stats::{DatasetStats, NonFinite, UNIT_NORM_TOL, first_not_unit_norm, is_unit_norm};
pub use subset::Subset;

use ndarray::{Array2, ArrayView2, Axis};

/// The float type the input stored its embeddings in. Outputs store every row in the same
/// type, so a file grown from f64 or f16 embeddings keeps its real rows bit for bit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum FloatType {
    /// IEEE half precision; every value is exact in f32, so `x` holds the input exactly.
    F16,
    /// bfloat16; every value is exact in f32, so `x` holds the input exactly.
    BF16,
    /// Single precision, embloom's own working type: nothing is kept beside `x`.
    #[default]
    F32,
    /// Wider than the f32 `x`, so the input's values are kept beside it in `Dataset::x_f64`.
    F64,
}

impl FloatType {
    /// The type of a dtype name as the readers spell it ("f16", "bf16", "f32", "f64"); every
    /// other name (CSV text, say) counts as f32, which is what the matrix is computed in.
    pub fn of_dtype(dtype: &str) -> FloatType {
        match dtype {
            "f16" => FloatType::F16,
            "bf16" => FloatType::BF16,
            "f64" => FloatType::F64,
            _ => FloatType::F32,
        }
    }

    /// Bytes per value as stored.
    pub fn bytes(self) -> usize {
        match self {
            FloatType::F16 | FloatType::BF16 => 2,
            FloatType::F32 => 4,
            FloatType::F64 => 8,
        }
    }
}

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
    /// The float type outputs store the rows in (the input's).
    pub float_type: FloatType,
    /// The input's own values when it stored f64, which `x` only rounds; the writers export
    /// these for real rows so they come out bit-identical.
    pub x_f64: Option<Array2<f64>>,
    /// Each row's index in the file it was read from (rows dropped for NaN/Inf leave gaps);
    /// `None` means the rows are the file's rows in order.
    pub source_row: Option<Vec<i64>>,
    /// The file stored ids as integers: outputs write them back as int64, not text.
    pub int_ids: bool,
    /// The file stored groups as integers: outputs write them back as int64, not text.
    pub int_groups: bool,
    /// The CSV/TSV table the rows were read from (where each of its rows sits, found again
    /// by `source_row`), so an output table can carry the real rows' own text and the
    /// ignored columns through; `None` for every other input.
    pub table: Option<std::sync::Arc<crate::io::TableSource>>,
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
            float_type: FloatType::F32,
            x_f64: None,
            source_row: None,
            int_ids: false,
            int_groups: false,
            table: None,
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
        Subset::of(self).class_counts()
    }

    /// Indices of the rows of class `c`, in row order.
    pub fn rows_of_class(&self, c: u32) -> Vec<usize> {
        self.rows_by_class(&[c]).remove(&c).unwrap_or_default()
    }

    /// Indices of the rows of each class in `classes`, in row order, found in one pass over
    /// the labels (fitting many classes would otherwise scan them once per class). Every
    /// asked-for class has an entry, empty when it has no rows.
    pub fn rows_by_class(&self, classes: &[u32]) -> std::collections::BTreeMap<u32, Vec<usize>> {
        Subset::of(self).rows_by_class(classes)
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
            float_type: self.float_type,
            x_f64: self.x_f64.as_ref().map(|o| o.select(Axis(0), rows)),
            source_row: Some(
                rows.iter()
                    .map(|&i| self.source_row.as_ref().map_or(i as i64, |s| s[i]))
                    .collect(),
            ),
            int_ids: self.int_ids,
            int_groups: self.int_groups,
            table: self.table.clone(),
        }
    }

    /// The source row of every row (its index in the input file).
    pub fn source_rows(&self) -> Vec<i64> {
        match &self.source_row {
            Some(s) => s.clone(),
            None => (0..self.n_rows() as i64).collect(),
        }
    }

    /// Forgets the input's f64 values, for work that only computes in f32 (assess) and
    /// would otherwise copy them into every fold.
    pub fn drop_stored_values(&mut self) {
        self.x_f64 = None;
    }
}
