//! Scores as functions of per-class counts, so that one definition serves a single fold, the
//! test rows pooled over the folds of a repeat (Forman & Scholz 2010, "Apples-to-Apples in
//! Cross-Validation Studies", recommend pooling the confusion counts for F1) and a bootstrap
//! resample (where each row's count is its multiplicity).

use super::{PairedFold, TestOutcome, mean};

/// Per-class counts of one prediction set: true positives, true rows, predicted rows.
#[derive(Debug, Clone, PartialEq)]
pub struct ClassCounts {
    /// True positives per class.
    pub tp: Vec<f64>,
    /// Rows whose true class is this class.
    pub truth: Vec<f64>,
    /// Rows predicted as this class.
    pub predicted: Vec<f64>,
}

impl ClassCounts {
    /// All-zero counts, to be added to fold by fold.
    pub fn zeros(n_classes: usize) -> Self {
        ClassCounts {
            tp: vec![0.0; n_classes],
            truth: vec![0.0; n_classes],
            predicted: vec![0.0; n_classes],
        }
    }

    /// Add the rows of `o`, each with weight `weight(i)` (1 for plain counts).
    pub fn add(&mut self, o: &TestOutcome, weight: impl Fn(usize) -> f64) {
        for (i, (&t, &p)) in o.labels.iter().zip(&o.pred).enumerate() {
            let w = weight(i);
            if w == 0.0 {
                continue;
            }
            let (t, p) = (t as usize, p as usize);
            if t >= self.truth.len() || p >= self.truth.len() {
                continue;
            }
            self.truth[t] += w;
            self.predicted[p] += w;
            if t == p {
                self.tp[t] += w;
            }
        }
    }

    /// The counts of one prediction set, every row weighted 1.
    pub fn of(o: &TestOutcome, n_classes: usize) -> Self {
        let mut c = ClassCounts::zeros(n_classes);
        c.add(o, |_| 1.0);
        c
    }
}

/// A score computed from pooled counts. Definitions follow scikit-learn's (zero_division=0;
/// balanced accuracy over classes with true rows; macro-F1 over classes true or predicted).
#[derive(Debug, Clone, PartialEq)]
pub enum PooledMetric {
    /// Share of rows predicted right.
    Accuracy,
    /// Mean recall over the classes with true rows.
    BalancedAccuracy,
    /// Mean F1 over the classes true or predicted.
    MacroF1,
    /// Mean recall over these classes (those with true rows).
    Recall(Vec<u32>),
    /// Precision of one class.
    Precision(u32),
    /// F1 of one class.
    F1(u32),
}

impl PooledMetric {
    /// Whether the score is a fixed-weight sum over test rows of "predicted right", so that
    /// its standard error follows from the per-row differences directly.
    pub fn is_row_linear(&self) -> bool {
        matches!(
            self,
            PooledMetric::Accuracy | PooledMetric::BalancedAccuracy | PooledMetric::Recall(_)
        )
    }

    /// Whether the score rests on a few named classes (and so on few test rows).
    pub fn is_class_figure(&self) -> bool {
        matches!(
            self,
            PooledMetric::Recall(_) | PooledMetric::Precision(_) | PooledMetric::F1(_)
        )
    }

    /// The classes whose true rows the score rests on (all when `None`).
    fn classes(&self) -> Option<Vec<u32>> {
        match self {
            PooledMetric::Recall(c) => Some(c.clone()),
            PooledMetric::Precision(c) | PooledMetric::F1(c) => Some(vec![*c]),
            _ => None,
        }
    }

    /// The score of `c`; NaN when it is undefined (no class to average over).
    pub fn value(&self, c: &ClassCounts) -> f64 {
        let ratio = |a: f64, b: f64| if b == 0.0 { 0.0 } else { a / b };
        let mean = |v: Vec<f64>| {
            if v.is_empty() {
                f64::NAN
            } else {
                v.iter().sum::<f64>() / v.len() as f64
            }
        };
        let k = c.truth.len();
        match self {
            PooledMetric::Accuracy => {
                let n: f64 = c.truth.iter().sum();
                if n == 0.0 {
                    f64::NAN
                } else {
                    c.tp.iter().sum::<f64>() / n
                }
            }
            PooledMetric::BalancedAccuracy => mean(
                (0..k)
                    .filter(|&i| c.truth[i] > 0.0)
                    .map(|i| c.tp[i] / c.truth[i])
                    .collect(),
            ),
            PooledMetric::MacroF1 => mean(
                (0..k)
                    .filter(|&i| c.truth[i] + c.predicted[i] > 0.0)
                    .map(|i| 2.0 * c.tp[i] / (c.truth[i] + c.predicted[i]))
                    .collect(),
            ),
            PooledMetric::Recall(set) => mean(
                set.iter()
                    .map(|&i| i as usize)
                    .filter(|&i| i < k && c.truth[i] > 0.0)
                    .map(|i| c.tp[i] / c.truth[i])
                    .collect(),
            ),
            PooledMetric::Precision(i) => {
                let i = *i as usize;
                if i >= k || c.truth[i] == 0.0 {
                    f64::NAN
                } else {
                    ratio(c.tp[i], c.predicted[i])
                }
            }
            PooledMetric::F1(i) => {
                let i = *i as usize;
                if i >= k || c.truth[i] == 0.0 {
                    f64::NAN
                } else {
                    ratio(2.0 * c.tp[i], c.truth[i] + c.predicted[i])
                }
            }
        }
    }
}

/// Method and baseline scores over the test rows pooled within each repeat, and their
/// difference, each averaged over the repeats where it is defined.
#[derive(Debug, Clone, PartialEq)]
pub struct Pooled {
    /// The method's score.
    pub method: f64,
    /// The baseline's score.
    pub baseline: f64,
    /// Method minus baseline, averaged over the repeats where both are defined.
    pub delta: f64,
}

/// [`Pooled`] scores of every metric.
pub fn pooled(folds: &[PairedFold], metrics: &[PooledMetric], n_classes: usize) -> Vec<Pooled> {
    let repeats = folds.iter().map(|f| f.repeat + 1).max().unwrap_or(0);
    let mut a = vec![ClassCounts::zeros(n_classes); repeats];
    let mut b = vec![ClassCounts::zeros(n_classes); repeats];
    for f in folds {
        a[f.repeat].add(f.method, |_| 1.0);
        b[f.repeat].add(f.baseline, |_| 1.0);
    }
    metrics
        .iter()
        .map(|m| {
            let (mut va, mut vb, mut vd) = (Vec::new(), Vec::new(), Vec::new());
            for r in 0..repeats {
                let (x, y) = (m.value(&a[r]), m.value(&b[r]));
                if x.is_finite() {
                    va.push(x);
                }
                if y.is_finite() {
                    vb.push(y);
                }
                if x.is_finite() && y.is_finite() {
                    vd.push(x - y);
                }
            }
            Pooled {
                method: mean(&va),
                baseline: mean(&vb),
                delta: mean(&vd),
            }
        })
        .collect()
}

/// The pooled difference of every metric.
pub fn pooled_deltas(folds: &[PairedFold], metrics: &[PooledMetric], n_classes: usize) -> Vec<f64> {
    pooled(folds, metrics, n_classes)
        .into_iter()
        .map(|p| p.delta)
        .collect()
}

/// Test rows per fold that each metric rests on: the true rows of its classes, averaged over
/// all folds (infinite for the scores over all classes).
pub fn rows_per_fold(folds: &[PairedFold], metrics: &[PooledMetric], n_classes: usize) -> Vec<f64> {
    let mut truth = vec![0.0f64; n_classes];
    for f in folds {
        for &t in &f.baseline.labels {
            if let Some(v) = truth.get_mut(t as usize) {
                *v += 1.0;
            }
        }
    }
    let n = folds.len().max(1) as f64;
    metrics
        .iter()
        .map(|m| match m.classes() {
            None => f64::INFINITY,
            Some(set) => {
                set.iter()
                    .filter_map(|&c| truth.get(c as usize))
                    .sum::<f64>()
                    / n
            }
        })
        .collect()
}
