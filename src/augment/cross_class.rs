//! How many of a row's nearest training rows, over *all* classes, belong to another class:
//! the signal borderline (which rows are "in danger") and adaptive (how hard each row is to
//! learn) build on. It is computed on the rows the method is fitted on, which inside assess
//! are the fold's training rows only, so a test row never shapes the synthetic rows.

use crate::data::Subset;
use crate::neighbors::{Metric, knn};

/// For each of the class rows `rows` of `train`, the number of its `m` nearest other rows of
/// `train` (any class, the row itself excluded by position) that are of another class than
/// `class`, and the `m` actually used (clamped to the `train` rows other than the row).
pub(super) fn other_class_counts(
    train: &Subset<'_>,
    class: u32,
    rows: &[usize],
    m: usize,
    metric: Metric,
) -> (Vec<usize>, usize) {
    let used = m.min(train.n_rows().saturating_sub(1));
    if used == 0 {
        return (vec![0; rows.len()], 0);
    }
    let q = train.x.select(rows);
    // One more than needed, so that dropping the row itself still leaves `used`.
    let found = knn(q.view(), train.x, used + 1, metric);
    let counts = rows
        .iter()
        .enumerate()
        .map(|(i, &own)| {
            let (idx, _) = found.row(i);
            let others: Vec<usize> = match idx.iter().position(|&j| j as usize == own) {
                Some(p) => idx
                    .iter()
                    .enumerate()
                    .filter(|&(t, _)| t != p)
                    .map(|(_, &j)| j as usize)
                    .collect(),
                None => idx[..used].iter().map(|&j| j as usize).collect(),
            };
            others
                .iter()
                .take(used)
                .filter(|&&j| train.labels[j] != class)
                .count()
        })
        .collect();
    (counts, used)
}
