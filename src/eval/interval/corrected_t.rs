//! The corrected resampled t-interval over per-fold differences (Nadeau & Bengio 2003,
//! "Inference for the Generalization Error", Machine Learning 52). Over k folds × r repeats it
//! is the corrected repeated k-fold test of Bouckaert & Frank (2004, "Evaluating the
//! Replicability of Significance Tests for Comparing Learning Algorithms", PAKDD).

use super::PairedFold;
use super::counts::{ClassCounts, PooledMetric};
use crate::eval::stats::corrected_paired_t;

/// Per metric, the finite per-fold differences (method − baseline), in fold order.
pub fn fold_differences(
    folds: &[PairedFold],
    metrics: &[PooledMetric],
    n_classes: usize,
) -> Vec<Vec<f64>> {
    let counts = fold_counts(folds, n_classes);
    metrics
        .iter()
        .map(|m| {
            counts
                .iter()
                .map(|(a, b)| m.value(a) - m.value(b))
                .filter(|d| d.is_finite())
                .collect()
        })
        .collect()
}

/// Method and baseline counts of each fold.
fn fold_counts(folds: &[PairedFold], n_classes: usize) -> Vec<(ClassCounts, ClassCounts)> {
    folds
        .iter()
        .map(|f| {
            (
                ClassCounts::of(f.method, n_classes),
                ClassCounts::of(f.baseline, n_classes),
            )
        })
        .collect()
}

/// Mean real training rows and mean test rows per fold.
pub fn mean_sizes(folds: &[PairedFold]) -> (f64, f64) {
    let n = folds.len().max(1) as f64;
    let train = folds.iter().map(|f| f.train_rows as f64).sum::<f64>() / n;
    let test = folds
        .iter()
        .map(|f| f.method.labels.len() as f64)
        .sum::<f64>()
        / n;
    (train, test)
}

/// Bounds and p-value, or `None` when the spread is zero or the sizes make no sense.
pub fn interval(diffs: &[f64], n_train: f64, n_test: f64, level: f64) -> Option<(f64, f64, f64)> {
    let iv = corrected_paired_t(diffs, n_train, n_test, level);
    (iv.low.is_finite() && iv.high.is_finite() && iv.low < iv.high)
        .then_some((iv.low, iv.high, iv.p_value))
}

/// Per metric, s̄²/k: the sample variance (ddof 1) of the k fold differences of each repeat,
/// averaged over the repeats with at least two, divided by the mean folds per repeat. This is
/// the variance of one repeat's mean difference if its folds were independent; repeats are not
/// counted as extra independent evidence (they reuse the same rows). NaN when no repeat has
/// two folds with a value.
pub fn within_repeat_variance(
    folds: &[PairedFold],
    metrics: &[PooledMetric],
    n_classes: usize,
) -> Vec<f64> {
    let repeats = folds.iter().map(|f| f.repeat + 1).max().unwrap_or(0);
    // Counted once per fold, not per metric (there are three metrics per class).
    let counts = fold_counts(folds, n_classes);
    metrics
        .iter()
        .map(|m| {
            let (mut var_sum, mut k_sum, mut used) = (0.0, 0.0, 0.0);
            for r in 0..repeats {
                let d: Vec<f64> = folds
                    .iter()
                    .zip(&counts)
                    .filter(|(f, _)| f.repeat == r)
                    .map(|(_, (a, b))| m.value(a) - m.value(b))
                    .filter(|d| d.is_finite())
                    .collect();
                if d.len() < 2 {
                    continue;
                }
                let mean = d.iter().sum::<f64>() / d.len() as f64;
                var_sum += d.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (d.len() - 1) as f64;
                k_sum += d.len() as f64;
                used += 1.0;
            }
            if used == 0.0 {
                f64::NAN
            } else {
                (var_sum / used) / (k_sum / used)
            }
        })
        .collect()
}
