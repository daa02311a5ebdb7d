//! 2-D views of grown classes for the report: real and synthetic rows of the class and rows of
//! its nearest rival classes, projected onto principal directions fitted to the class and its
//! rivals together. Fitted to the class alone, the directions are the class's own spread, and
//! every other class (whose offset lies mostly off them) collapses into the centre; with the
//! rivals in the fit, the directions that separate the class from its look-alikes are the
//! ones drawn.

use ndarray::{Array2, Axis};

use super::MethodId;
use super::results::Scatter;
use crate::augment::Grown;
use crate::data::Subset;
use crate::pca::Pca;

/// At most this many points of each kind are drawn, to keep the HTML small.
const MAX_POINTS: usize = 300;
/// Rows of each rival class drawn for context.
const RIVAL_ROWS: usize = 80;
/// Rival classes per view: the classes whose nearest rows lie closest to the grown class's
/// mean. Two,
/// because three class means span exactly a plane: when the classes are farther apart than
/// they are wide, the first two components are that plane and all three stay apart. With a
/// third rival the nearest one (often the look-alike that matters) can fall off the plane.
pub const RIVALS: usize = 2;
/// Rows of any one class entering the projection's fit (evenly spaced), which bounds the cost
/// of the fit on large classes.
const FIT_ROWS: usize = 400;
/// A rival enters the fit with at most as many rows as the grown class (but this many at
/// least), so a large rival does not swamp the grown class's own directions.
const MIN_RIVAL_FIT_ROWS: usize = 50;

/// At most this many grown classes get a view per method, largest first (the same order as
/// the report's tables): each costs a projection fit, and a page of hundreds of plots is
/// unreadable anyway. The report lists the others by name.
pub const MAX_CLASSES: usize = 12;

/// One view per grown class with synthetic rows and at least 3 real rows (the first
/// [`MAX_CLASSES`] of them, largest class first).
pub fn class_scatters(
    train: &Subset<'_>,
    grown: &Grown,
    classes: &[u32],
    method: &MethodId,
) -> Vec<Scatter> {
    // Rows of every grown class found in one pass per side, not one pass per class.
    let real_by = train.rows_by_class(classes);
    let mut syn_by: std::collections::BTreeMap<u32, Vec<usize>> =
        classes.iter().map(|&c| (c, Vec::new())).collect();
    for (i, l) in grown.labels.iter().enumerate() {
        if let Some(v) = syn_by.get_mut(l) {
            v.push(i);
        }
    }
    let size = |c: u32| real_by.get(&c).map_or(0, Vec::len);
    let mut order: Vec<u32> = classes.to_vec();
    order.sort_by(|&a, &b| size(b).cmp(&size(a)).then(a.cmp(&b)));
    order
        .into_iter()
        .filter_map(|c| {
            let real_rows = real_by.get(&c)?;
            let syn_rows = syn_by.get(&c)?;
            if real_rows.len() < 3 || syn_rows.is_empty() {
                return None;
            }
            let rivals = nearest_classes(train, c, &class_mean(train, real_rows));
            let rival_by = train.rows_by_class(&rivals);
            let own_fit = spaced(real_rows, FIT_ROWS);
            let rival_cap = own_fit.len().max(MIN_RIVAL_FIT_ROWS);
            let mut fit_rows = own_fit;
            for k in &rivals {
                fit_rows.extend(spaced(&rival_by[k], rival_cap));
            }
            let pca = Pca::fit(train.x.select(&fit_rows).view()).ok()?;
            if pca.components.nrows() < 2 {
                return None;
            }
            let mut others = Vec::new();
            let mut others_rival = Vec::new();
            for (j, &k) in rivals.iter().enumerate() {
                let rows = spaced(&rival_by[&k], RIVAL_ROWS);
                others_rival.extend(std::iter::repeat_n(j, rows.len()));
                others.extend(points(&pca, &train.x.select(&rows)));
            }
            Some(Scatter {
                method: method.clone(),
                class: train.classes[c as usize].clone(),
                real: points(&pca, &train.x.select(&spaced(real_rows, MAX_POINTS))),
                synthetic: points(
                    &pca,
                    &grown.x.select(Axis(0), &spaced(syn_rows, MAX_POINTS)),
                ),
                others,
                rivals: rivals
                    .iter()
                    .map(|&k| train.classes[k as usize].clone())
                    .collect(),
                others_rival,
            })
        })
        .take(MAX_CLASSES)
        .collect()
}

/// At most `n` of `rows`, evenly spaced (every row when there are few enough).
fn spaced(rows: &[usize], n: usize) -> Vec<usize> {
    let step = rows.len().div_ceil(n.max(1)).max(1);
    rows.iter().copied().step_by(step).collect()
}

/// The mean of the given rows, accumulated in f64.
fn class_mean(train: &Subset<'_>, rows: &[usize]) -> Vec<f64> {
    let mut sum = vec![0.0f64; train.x.ncols()];
    for &i in rows {
        for (s, &v) in sum.iter_mut().zip(train.x.row(i)) {
            *s += f64::from(v);
        }
    }
    let n = rows.len().max(1) as f64;
    sum.into_iter().map(|s| s / n).collect()
}

/// Up to [`RIVALS`] other classes whose nearest training row lies closest (euclidean) to the
/// class's mean, nearest first; ties by class index. One pass over the rows keeping one
/// distance per class, so a set of many classes costs no per-class means.
fn nearest_classes(train: &Subset<'_>, c: u32, mean: &[f64]) -> Vec<u32> {
    let mut best = vec![f64::INFINITY; train.classes.len()];
    for (i, &l) in train.labels.iter().enumerate() {
        if l == c {
            continue;
        }
        let d: f64 = train
            .x
            .row(i)
            .iter()
            .zip(mean)
            .map(|(&a, &b)| (f64::from(a) - b) * (f64::from(a) - b))
            .sum();
        if let Some(slot) = best.get_mut(l as usize)
            && d < *slot
        {
            *slot = d;
        }
    }
    let mut cand: Vec<(f64, u32)> = best
        .into_iter()
        .enumerate()
        .filter(|(_, d)| d.is_finite())
        .map(|(k, d)| (d, k as u32))
        .collect();
    cand.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    cand.into_iter().take(RIVALS).map(|(_, k)| k).collect()
}

fn points(pca: &Pca, x: &Array2<f32>) -> Vec<[f32; 2]> {
    let p = pca.transform(x.view(), 2);
    p.rows().into_iter().map(|r| [r[0], r[1]]).collect()
}
