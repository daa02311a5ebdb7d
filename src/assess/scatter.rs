//! 2-D views of grown classes for the report: real and synthetic rows of the class, and the
//! nearest rows of other classes, projected onto the class's first two principal directions.

use ndarray::{Array2, Axis};

use super::MethodId;
use super::results::Scatter;
use crate::augment::Grown;
use crate::data::Dataset;
use crate::pca::Pca;

/// At most this many points of each kind are drawn, to keep the HTML small.
const MAX_POINTS: usize = 300;
/// Other-class rows shown for context.
const CONTEXT_ROWS: usize = 60;

/// At most this many classes get a scatter per method: each costs a pass over the training
/// rows (for the context rows), so drawing every one of thousands of grown classes would make
/// this classes × rows, and a page of thousands of plots is unreadable anyway.
pub const MAX_CLASSES: usize = 24;

/// One scatter per grown class with synthetic rows (the first [`MAX_CLASSES`] of them).
pub fn class_scatters(
    train: &Dataset,
    grown: &Grown,
    classes: &[u32],
    method: &MethodId,
) -> Vec<Scatter> {
    // Rows of every class found in one pass per side, not one pass per class.
    let real_by = train.rows_by_class(classes);
    let mut syn_by: std::collections::BTreeMap<u32, Vec<usize>> =
        classes.iter().map(|&c| (c, Vec::new())).collect();
    for (i, l) in grown.labels.iter().enumerate() {
        if let Some(v) = syn_by.get_mut(l) {
            v.push(i);
        }
    }
    classes
        .iter()
        .filter_map(|&c| {
            let real_rows = &real_by[&c];
            let syn_rows = &syn_by[&c];
            if real_rows.len() < 3 || syn_rows.is_empty() {
                return None;
            }
            let real = train.x.select(Axis(0), real_rows);
            let pca = Pca::fit(real.view()).ok()?;
            if pca.components.nrows() < 2 {
                return None;
            }
            let synthetic = grown.x.select(Axis(0), syn_rows);
            let others = nearest_others(train, c, &pca);
            Some(Scatter {
                method: method.clone(),
                class: train.classes[c as usize].clone(),
                real: points(&pca, &real),
                synthetic: points(&pca, &synthetic),
                others: points(&pca, &others),
            })
        })
        .take(MAX_CLASSES)
        .collect()
}

fn points(pca: &Pca, x: &Array2<f32>) -> Vec<[f32; 2]> {
    let step = x.nrows().div_ceil(MAX_POINTS).max(1);
    let p = pca.transform(x.view(), 2);
    p.rows()
        .into_iter()
        .step_by(step)
        .map(|r| [r[0], r[1]])
        .collect()
}

/// Rows of other classes closest to the class mean (euclidean in the full space).
fn nearest_others(train: &Dataset, c: u32, pca: &Pca) -> Array2<f32> {
    let mean = pca.mean.mapv(|v| v as f32);
    let mut cand: Vec<(f32, usize)> = (0..train.n_rows())
        .filter(|&i| train.labels[i] != c)
        .map(|i| {
            let d: f32 = train
                .x
                .row(i)
                .iter()
                .zip(mean.iter())
                .map(|(a, b)| (a - b) * (a - b))
                .sum();
            (d, i)
        })
        .collect();
    cand.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    let rows: Vec<usize> = cand.iter().take(CONTEXT_ROWS).map(|&(_, i)| i).collect();
    train.x.select(Axis(0), &rows)
}
