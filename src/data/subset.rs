//! A dataset's rows taken by index, labels and class names with them, without copying the
//! rows: what a method is fitted on. In `assess` each fold's training rows are a `Subset` of
//! the input, so no method fit copies the fold; `grow` fits on the whole dataset the same way.

use std::borrow::Cow;
use std::collections::BTreeMap;

use super::{Dataset, Rows};

/// Rows of a dataset with their class indices; row `i` of the subset is `x.row(i)` with
/// class `labels[i]`, and class indices name `classes` as in the dataset.
#[derive(Debug, Clone)]
pub struct Subset<'a> {
    /// The rows, read in place.
    pub x: Rows<'a>,
    /// Class index per row of the subset.
    pub labels: Cow<'a, [u32]>,
    /// The dataset's class names.
    pub classes: &'a [String],
}

impl<'a> Subset<'a> {
    /// Every row of `ds`, in order.
    pub fn of(ds: &'a Dataset) -> Self {
        Subset {
            x: Rows::all(ds.view()),
            labels: Cow::Borrowed(&ds.labels),
            classes: &ds.classes,
        }
    }

    /// Rows `rows` of `ds` (in that order), which must be rows of `ds`.
    pub fn picked(ds: &'a Dataset, rows: &'a [usize]) -> Self {
        Subset {
            x: Rows::picked(ds.view(), rows),
            labels: Cow::Owned(rows.iter().map(|&i| ds.labels[i]).collect()),
            classes: &ds.classes,
        }
    }

    /// Number of rows of the subset.
    pub fn n_rows(&self) -> usize {
        self.x.nrows()
    }

    /// Embedding width.
    pub fn dims(&self) -> usize {
        self.x.ncols()
    }

    /// Number of class names (a class may have no rows here).
    pub fn n_classes(&self) -> usize {
        self.classes.len()
    }

    /// Row count per class index.
    pub fn class_counts(&self) -> Vec<usize> {
        let mut counts = vec![0usize; self.classes.len()];
        for &l in self.labels.iter() {
            counts[l as usize] += 1;
        }
        counts
    }

    /// Positions (in the subset) of the rows of each class in `classes`, in row order, as
    /// [`Dataset::rows_by_class`] gives them.
    pub fn rows_by_class(&self, classes: &[u32]) -> BTreeMap<u32, Vec<usize>> {
        let mut rows: BTreeMap<u32, Vec<usize>> =
            classes.iter().map(|&c| (c, Vec::new())).collect();
        for (i, l) in self.labels.iter().enumerate() {
            if let Some(r) = rows.get_mut(l) {
                r.push(i);
            }
        }
        rows
    }
}

impl<'a> From<&'a Dataset> for Subset<'a> {
    fn from(ds: &'a Dataset) -> Self {
        Subset::of(ds)
    }
}
