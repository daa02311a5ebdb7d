//! Paired bootstrap over test rows (Efron & Tibshirani 1993, "An Introduction to the
//! Bootstrap", ch. 13 for the percentile interval). Rows are resampled with replacement within
//! each cell of (fold of the first repeat, true class), so every resample keeps the stratified
//! design's class sizes per fold; the same draw weights method and baseline (paired) and, with
//! repeats, every repeat (a row is one observation however often it was tested).

use std::collections::{BTreeMap, HashMap};

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use super::PairedFold;
use super::counts::{ClassCounts, PooledMetric};

/// Resamples per interval.
pub const BOOTSTRAP_REPLICATES: usize = 1000;

/// Per metric, the pooled difference in each resample where it is defined.
pub fn replicates(
    folds: &[PairedFold],
    metrics: &[PooledMetric],
    n_classes: usize,
    seed: u64,
) -> Vec<Vec<f64>> {
    // Local index of every input row, and the cell it is resampled in.
    let mut local: HashMap<usize, usize> = HashMap::new();
    let mut cells: BTreeMap<(usize, usize, u32), Vec<usize>> = BTreeMap::new();
    let first = folds.iter().map(|f| f.repeat).min().unwrap_or(0);
    let mut fold_of_first = 0usize;
    for f in folds {
        let cell_fold = if f.repeat == first {
            fold_of_first += 1;
            fold_of_first
        } else {
            0
        };
        for (&row, &t) in f.baseline.rows.iter().zip(&f.baseline.labels) {
            let next = local.len();
            if let std::collections::hash_map::Entry::Vacant(e) = local.entry(row) {
                e.insert(next);
                // Rows first met outside the first repeat (none in k-fold) get their own class cell.
                cells
                    .entry((cell_fold, usize::from(cell_fold == 0), t))
                    .or_default()
                    .push(next);
            }
        }
    }
    let index: Vec<Vec<usize>> = folds
        .iter()
        .map(|f| f.baseline.rows.iter().map(|r| local[r]).collect())
        .collect();
    let repeats = folds.iter().map(|f| f.repeat + 1).max().unwrap_or(0);
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut weight = vec![0.0f64; local.len()];
    let mut out = vec![Vec::with_capacity(BOOTSTRAP_REPLICATES); metrics.len()];
    for _ in 0..BOOTSTRAP_REPLICATES {
        weight.iter_mut().for_each(|w| *w = 0.0);
        for members in cells.values() {
            for _ in 0..members.len() {
                weight[members[rng.gen_range(0..members.len())]] += 1.0;
            }
        }
        let mut a = vec![ClassCounts::zeros(n_classes); repeats];
        let mut b = vec![ClassCounts::zeros(n_classes); repeats];
        for (f, idx) in folds.iter().zip(&index) {
            a[f.repeat].add(f.method, |i| weight[idx[i]]);
            b[f.repeat].add(f.baseline, |i| weight[idx[i]]);
        }
        for (m, metric) in metrics.iter().enumerate() {
            let d: Vec<f64> = (0..repeats)
                .map(|r| metric.value(&a[r]) - metric.value(&b[r]))
                .filter(|d| d.is_finite())
                .collect();
            if !d.is_empty() {
                out[m].push(d.iter().sum::<f64>() / d.len() as f64);
            }
        }
    }
    out
}

/// Sample standard deviation (ddof 1) of the resampled differences.
pub fn std_dev(v: &[f64]) -> f64 {
    if v.len() < 2 {
        return f64::NAN;
    }
    let m = v.iter().sum::<f64>() / v.len() as f64;
    (v.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / (v.len() - 1) as f64).sqrt()
}

/// Percentile interval (numpy's default linear interpolation between order statistics) and a
/// two-sided p-value 2·min(#{d* ≤ 0} + 1, #{d* ≥ 0} + 1)/(B + 1), capped at 1, which is never
/// 0. `None` when the resamples do not vary.
pub fn percentile(v: &[f64], level: f64) -> Option<(f64, f64, f64)> {
    if v.len() < 2 || v.iter().all(|&x| x == v[0]) || !(level > 0.0 && level < 1.0) {
        return None;
    }
    let mut s = v.to_vec();
    s.sort_by(f64::total_cmp);
    let q = |p: f64| {
        let h = p * (s.len() - 1) as f64;
        let lo = h.floor() as usize;
        let hi = (lo + 1).min(s.len() - 1);
        s[lo] + (h - lo as f64) * (s[hi] - s[lo])
    };
    let tail = (1.0 - level) / 2.0;
    let below = s.iter().filter(|&&x| x <= 0.0).count() as f64;
    let above = s.iter().filter(|&&x| x >= 0.0).count() as f64;
    let p = (2.0 * (below + 1.0).min(above + 1.0) / (s.len() as f64 + 1.0)).min(1.0);
    Some((q(tail), q(1.0 - tail), p))
}
