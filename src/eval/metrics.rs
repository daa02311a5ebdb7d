//! Classification scores, defined exactly as scikit-learn defines them so that users can check
//! embloom's figures against the tooling they already trust, plus calibration (log loss, ECE)
//! for the probes that give probabilities.

use ndarray::ArrayView2;
use serde::{Deserialize, Serialize};

/// Scores of one class, one-vs-rest.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ClassScores {
    /// tp / (tp + fp); 0 when the class is never predicted (scikit-learn's zero_division=0).
    pub precision: f64,
    /// tp / (tp + fn); 0 when the class has no true rows.
    pub recall: f64,
    /// 2·tp / (2·tp + fp + fn); 0 when that is 0/0.
    pub f1: f64,
    /// Number of true rows of the class.
    pub support: usize,
}

/// Scores of one prediction set.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Scores {
    /// Share of rows predicted right.
    pub accuracy: f64,
    /// Mean recall over the classes present in `y_true` (scikit-learn's
    /// `balanced_accuracy_score`, which drops classes without support).
    pub balanced_accuracy: f64,
    /// Mean F1 over the classes present in `y_true` ∪ `y_pred` (scikit-learn's default labels
    /// for `f1_score(average="macro")`).
    pub macro_f1: f64,
    /// Indexed by class; classes absent from both sides have zeros and do not enter the means.
    pub per_class: Vec<ClassScores>,
}

/// Scores of `y_pred` against `y_true`. `per_class` has `n_classes` entries (more if a label
/// exceeds it). Pairs are read up to the shorter slice; with no pairs every mean is NaN.
pub fn score(y_true: &[u32], y_pred: &[u32], n_classes: usize) -> Scores {
    let width = y_true
        .iter()
        .chain(y_pred)
        .map(|&l| l as usize + 1)
        .max()
        .unwrap_or(0)
        .max(n_classes);
    let mut tp = vec![0usize; width];
    let mut true_sum = vec![0usize; width];
    let mut pred_sum = vec![0usize; width];
    let mut n = 0usize;
    for (&t, &p) in y_true.iter().zip(y_pred) {
        n += 1;
        true_sum[t as usize] += 1;
        pred_sum[p as usize] += 1;
        if t == p {
            tp[t as usize] += 1;
        }
    }
    let ratio = |a: usize, b: usize| if b == 0 { 0.0 } else { a as f64 / b as f64 };
    let per_class: Vec<ClassScores> = (0..width)
        .map(|c| ClassScores {
            precision: ratio(tp[c], pred_sum[c]),
            recall: ratio(tp[c], true_sum[c]),
            f1: ratio(2 * tp[c], true_sum[c] + pred_sum[c]),
            support: true_sum[c],
        })
        .collect();
    let correct: usize = tp.iter().sum();
    let mean_over = |keep: &dyn Fn(usize) -> bool, value: &dyn Fn(&ClassScores) -> f64| {
        let (s, m) = per_class
            .iter()
            .enumerate()
            .filter(|&(c, _)| keep(c))
            .fold((0.0, 0usize), |(s, m), (_, cs)| (s + value(cs), m + 1));
        if m == 0 { f64::NAN } else { s / m as f64 }
    };
    Scores {
        accuracy: if n == 0 {
            f64::NAN
        } else {
            correct as f64 / n as f64
        },
        balanced_accuracy: mean_over(&|c| true_sum[c] > 0, &|cs| cs.recall),
        macro_f1: mean_over(&|c| true_sum[c] + pred_sum[c] > 0, &|cs| cs.f1),
        per_class,
    }
}

/// Mean recall over the `grown` classes that have true rows; `None` when none has. This is the
/// figure augmentation is meant to move, so it is reported apart from the overall means.
pub fn grown_class_recall(scores: &Scores, grown: &[u32]) -> Option<f64> {
    let recalls: Vec<f64> = grown
        .iter()
        .filter_map(|&c| scores.per_class.get(c as usize))
        .filter(|cs| cs.support > 0)
        .map(|cs| cs.recall)
        .collect();
    (!recalls.is_empty()).then(|| recalls.iter().sum::<f64>() / recalls.len() as f64)
}

/// Mean −ln p(true class), as scikit-learn's `log_loss` (≥ 1.5, checked against 1.9): each
/// probability is clipped to [ε, 1 − ε] with ε = f64::EPSILON (numpy's finfo(float64).eps),
/// and rows are *not* renormalised. A label outside the columns counts as probability 0
/// (clipped to ε). NaN when there are no rows.
pub fn log_loss(y_true: &[u32], proba: ArrayView2<f64>) -> f64 {
    let eps = f64::EPSILON;
    let n = y_true.len().min(proba.nrows());
    if n == 0 {
        return f64::NAN;
    }
    let total: f64 = y_true
        .iter()
        .zip(proba.rows())
        .map(|(&t, row)| {
            -row.get(t as usize)
                .copied()
                .unwrap_or(0.0)
                .clamp(eps, 1.0 - eps)
                .ln()
        })
        .sum();
    total / n as f64
}

/// Expected calibration error (Guo et al. 2017, "On Calibration of Modern Neural Networks",
/// eq. 3): confidence = the row's largest probability, prediction = its first arg-max; rows
/// fall into `bins` equal-width bins, bin i = (i/B, (i+1)/B] with bin 0 also holding 0
/// (boundaries computed as i/B); ECE = Σ_i |B_i|/n · |acc(B_i) − conf(B_i)|. The usual choice
/// is 15 bins. NaN when there are no rows or no bins.
pub fn ece(y_true: &[u32], proba: ArrayView2<f64>, bins: usize) -> f64 {
    let n = y_true.len().min(proba.nrows());
    if n == 0 || bins == 0 || proba.ncols() == 0 {
        return f64::NAN;
    }
    let b = bins as f64;
    let mut count = vec![0usize; bins];
    let mut hits = vec![0usize; bins];
    let mut conf_sum = vec![0.0f64; bins];
    for (&t, row) in y_true.iter().zip(proba.rows()) {
        let (pred, conf) =
            row.iter()
                .enumerate()
                .fold((0usize, f64::NEG_INFINITY), |(bi, bv), (i, &v)| {
                    if v > bv { (i, v) } else { (bi, bv) }
                });
        // First guess from the product, then settle against the exact boundaries i/B so that a
        // confidence equal to a boundary lands in the lower bin.
        let mut i = ((conf * b).ceil() as usize).saturating_sub(1).min(bins - 1);
        while i > 0 && conf <= i as f64 / b {
            i -= 1;
        }
        while i + 1 < bins && conf > (i + 1) as f64 / b {
            i += 1;
        }
        count[i] += 1;
        conf_sum[i] += conf;
        if pred == t as usize {
            hits[i] += 1;
        }
    }
    (0..bins)
        .filter(|&i| count[i] > 0)
        .map(|i| {
            let m = count[i] as f64;
            (m / n as f64) * (hits[i] as f64 / m - conf_sum[i] / m).abs()
        })
        .sum()
}
