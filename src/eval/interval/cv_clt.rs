//! The cross-validation central-limit interval of Bayle, Bayle, Janson & Mackey (2020,
//! "Cross-validation Confidence Intervals for Test Error", NeurIPS): the score difference is an
//! average of per-test-row loss differences pooled over all folds, and its standard error is
//! σ̂/√n with σ̂² the variance of those per-row differences. That treats the n test rows as the
//! sample, not the k fold scores, which is what makes it narrower than the corrected t while
//! still valid for stable learners.
//!
//! Two adaptations, both exact rewritings rather than approximations:
//! - Balanced accuracy and class recalls weight each row by 1/(C·n_c) (1/(G·n_c) over G
//!   classes), so the variance is summed per class: SE² = Σ_c α_c² s_c² / n_c, with s_c² the
//!   sample variance (ddof 1) of the differences of class c's rows. Folds are stratified, so
//!   the class sizes are fixed by design and this is the stratified form of the same variance.
//! - With r repeats every row is tested r times; its r differences are averaged first, so the
//!   variance reflects the averaging over repeats.

use std::collections::HashMap;

use super::PairedFold;
use super::counts::PooledMetric;
use super::normal::{normal_cdf, normal_quantile};
use crate::eval::stats::{t_cdf, t_quantile};

/// Standard error of each row-linear metric's pooled difference (NaN for the others).
pub fn standard_errors(
    folds: &[PairedFold],
    metrics: &[PooledMetric],
    n_classes: usize,
) -> Vec<f64> {
    // Per input row: (sum of differences over repeats, times tested, class).
    let mut rows: HashMap<usize, (f64, f64, u32)> = HashMap::new();
    for f in folds {
        let (a, b) = (f.method, f.baseline);
        for i in 0..a.labels.len().min(b.pred.len()) {
            let t = a.labels[i];
            let d = f64::from(u8::from(a.pred[i] == t)) - f64::from(u8::from(b.pred[i] == t));
            let e = rows.entry(a.rows[i]).or_insert((0.0, 0.0, t));
            e.0 += d;
            e.1 += 1.0;
        }
    }
    // Per class: count, sum and sum of squares of the per-row mean differences.
    let mut n = vec![0.0f64; n_classes];
    let mut s = vec![0.0f64; n_classes];
    let mut ss = vec![0.0f64; n_classes];
    // Sorted so the floating-point sums do not depend on hash order.
    let mut keys: Vec<&usize> = rows.keys().collect();
    keys.sort_unstable();
    for k in keys {
        let (sum, count, class) = rows[k];
        let c = class as usize;
        if c >= n_classes {
            continue;
        }
        let d = sum / count;
        n[c] += 1.0;
        s[c] += d;
        ss[c] += d * d;
    }
    let var: Vec<f64> = (0..n_classes)
        .map(|c| {
            if n[c] < 2.0 {
                0.0
            } else {
                ((ss[c] - s[c] * s[c] / n[c]) / (n[c] - 1.0)).max(0.0)
            }
        })
        .collect();
    let total: f64 = n.iter().sum();
    metrics
        .iter()
        .map(|m| {
            let weights: Vec<(usize, f64)> = match m {
                PooledMetric::Accuracy => (0..n_classes)
                    .filter(|&c| n[c] > 0.0)
                    .map(|c| (c, n[c] / total))
                    .collect(),
                PooledMetric::BalancedAccuracy => {
                    let present: Vec<usize> = (0..n_classes).filter(|&c| n[c] > 0.0).collect();
                    let w = 1.0 / present.len().max(1) as f64;
                    present.into_iter().map(|c| (c, w)).collect()
                }
                PooledMetric::Recall(set) => {
                    let present: Vec<usize> = set
                        .iter()
                        .map(|&c| c as usize)
                        .filter(|&c| c < n_classes && n[c] > 0.0)
                        .collect();
                    let w = 1.0 / present.len().max(1) as f64;
                    present.into_iter().map(|c| (c, w)).collect()
                }
                _ => return f64::NAN,
            };
            if weights.is_empty() {
                return f64::NAN;
            }
            weights
                .iter()
                .map(|&(c, w)| w * w * var[c] / n[c])
                .sum::<f64>()
                .sqrt()
        })
        .collect()
}

/// The normal interval `delta ± z·se` and its two-sided p-value; `None` without a positive,
/// finite standard error.
pub fn interval(delta: f64, se: f64, level: f64) -> Option<(f64, f64, f64)> {
    if !(se.is_finite() && se > 0.0 && delta.is_finite() && level > 0.0 && level < 1.0) {
        return None;
    }
    let z = normal_quantile(1.0 - (1.0 - level) / 2.0);
    // A real but enormous effect can underflow the tail; the smallest positive double keeps
    // "p = 0" from ever being printed.
    let p = (2.0 * normal_cdf(-(delta / se).abs())).clamp(f64::MIN_POSITIVE, 1.0);
    Some((delta - z * se, delta + z * se, p))
}

/// Per metric, the root mean over repeats of each repeat's own squared standard error: the
/// test-row noise in one repeat's fold differences (with one repeat, [`standard_errors`]).
pub fn single_repeat_errors(
    folds: &[PairedFold],
    metrics: &[PooledMetric],
    n_classes: usize,
) -> Vec<f64> {
    let repeats = folds.iter().map(|f| f.repeat + 1).max().unwrap_or(0);
    let mut sum = vec![0.0; metrics.len()];
    let mut used = vec![0.0; metrics.len()];
    for r in 0..repeats {
        let one: Vec<PairedFold> = folds.iter().filter(|f| f.repeat == r).copied().collect();
        for (j, se) in standard_errors(&one, metrics, n_classes)
            .into_iter()
            .enumerate()
        {
            if se.is_finite() {
                sum[j] += se * se;
                used[j] += 1.0;
            }
        }
    }
    sum.iter()
        .zip(&used)
        .map(|(s, u)| if *u > 0.0 { (s / u).sqrt() } else { f64::NAN })
        .collect()
}

/// The interval of `cv-clt-folds`. `between` = c·s̄²/k is the fold-level variance of one
/// repeat's mean difference times the overlap factor c; of it, c·`single`² (one repeat's
/// test-row noise) is not training-set variance and is already in the per-row SE, so the
/// training-set part is e = max(0, between − c·single²) and the variance is SE² = se² + e. Since e rests on the k fold differences only, the quantile is Student's t
/// with Welch–Satterthwaite degrees of freedom (k − 1)·(SE²/e)² (Satterthwaite 1946): k − 1
/// when the folds carry all the variance, unbounded as e vanishes.
pub fn interval_with_folds(
    delta: f64,
    se: f64,
    single: f64,
    between: f64,
    overlap: f64,
    k: f64,
    level: f64,
) -> Option<(f64, f64, f64)> {
    let row = if se.is_finite() { se * se } else { 0.0 };
    let single = if single.is_finite() {
        single * single
    } else {
        row
    };
    let excess = if between.is_finite() {
        (between - overlap * single).max(0.0)
    } else {
        0.0
    };
    let var = row + excess;
    if excess == 0.0 || k < 2.0 {
        return interval(delta, var.sqrt(), level);
    }
    if !(var > 0.0 && delta.is_finite() && level > 0.0 && level < 1.0) {
        return None;
    }
    let df = ((k - 1.0) * (var / excess).powi(2)).min(1e6);
    let se = var.sqrt();
    let q = t_quantile(1.0 - (1.0 - level) / 2.0, df);
    let p = (2.0 * t_cdf(-(delta / se).abs(), df)).clamp(f64::MIN_POSITIVE, 1.0);
    Some((delta - q * se, delta + q * se, p))
}
