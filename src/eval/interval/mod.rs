//! Confidence intervals for the paired difference "method − baseline" of a cross-validated
//! score, one method per file. Each works from what the fold loop kept of every test row (its
//! input row, true class and the two predictions), so the row-level methods can pool the test
//! rows of all folds instead of treating each fold's score as one observation.
//!
//! Which method is the default is decided by the coverage simulation under `tests/bench/`
//! (see the README's table), not by taste.

mod bootstrap;
mod corrected_t;
mod counts;
mod cv_clt;
mod normal;

use serde::{Deserialize, Serialize};

pub use bootstrap::{BOOTSTRAP_REPLICATES, percentile as bootstrap_percentile};
pub use counts::{ClassCounts, Pooled, PooledMetric, pooled as counts_pooled};
pub use normal::{normal_cdf, normal_quantile};

/// Below this many test rows per fold (on average over the folds of a repeat) a per-class
/// figure has no interval: with two or three rows a fold's recall moves in steps of a third
/// or a half, and no variance estimate from such steps is worth printing.
pub const MIN_TEST_ROWS_PER_FOLD: f64 = 5.0;

/// How the interval of a paired difference is computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum IntervalKind {
    /// Corrected resampled t over the per-fold differences (Nadeau & Bengio 2003); over
    /// k folds × r repeats this is the corrected repeated k-fold test of Bouckaert & Frank
    /// (2004): variance (1/(k·r) + n_test/n_train)·s², t with k·r − 1 degrees of freedom.
    /// The default: in the coverage study it is the only kind never below 93% coverage.
    #[default]
    CorrectedT,
    /// Cross-validation central-limit interval (Bayle, Bayle, Janson & Mackey 2020) from the
    /// per-test-row differences pooled over folds; non-linear scores use the bootstrap's
    /// standard error in the same normal interval.
    CvClt,
    /// Paired percentile bootstrap over test rows, resampled within folds and classes.
    Bootstrap,
    /// The central-limit interval plus the training-set variance the folds reveal: s̄²/k, s̄²
    /// the variance of the k fold differences within a repeat (averaged over repeats), less
    /// the part one repeat's test-row noise explains, is added to the per-row SE² after
    /// Nadeau & Bengio's overlap factor 1 + (k − 1)·n_test/n_train, with Welch–Satterthwaite
    /// degrees of freedom for that added part. The overlap factor applies to the
    /// training-set part only: the test rows of different folds are disjoint, so their noise
    /// is independent and the per-row SE already counts it exactly; applying the factor to
    /// all of s̄², as the corrected t does, is what makes that interval too wide. Bayle et al.'s interval assumes a stable learner;
    /// when growing a 10-row class moves the probe a lot from one training set to the next,
    /// the fold differences spread more than test-row noise explains, and this keeps that.
    CvCltFolds,
}

impl IntervalKind {
    /// Every kind, in the order `--help` lists them.
    pub const ALL: [IntervalKind; 4] = [
        IntervalKind::CorrectedT,
        IntervalKind::CvClt,
        IntervalKind::Bootstrap,
        IntervalKind::CvCltFolds,
    ];

    /// The name used on the command line and in results.
    pub fn name(self) -> &'static str {
        match self {
            IntervalKind::CorrectedT => "corrected-t",
            IntervalKind::CvClt => "cv-clt",
            IntervalKind::Bootstrap => "bootstrap",
            IntervalKind::CvCltFolds => "cv-clt-folds",
        }
    }

    /// The kind named `name`, if any.
    pub fn parse(name: &str) -> Option<IntervalKind> {
        IntervalKind::ALL.into_iter().find(|k| k.name() == name)
    }
}

impl std::fmt::Display for IntervalKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

/// What the fold loop keeps of one fold's test rows for one method and probe.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct TestOutcome {
    /// Row of the input data set, per test row.
    pub rows: Vec<usize>,
    /// True class, per test row.
    pub labels: Vec<u32>,
    /// Predicted class, per test row.
    pub pred: Vec<u32>,
}

/// One fold's test rows under the method and under the baseline (same rows, same order).
#[derive(Debug, Clone, Copy)]
pub struct PairedFold<'a> {
    /// Which repeat of the fold scheme the fold belongs to.
    pub repeat: usize,
    /// Real training rows of the fold (for the corrected t's n_test/n_train).
    pub train_rows: usize,
    /// Predictions of the probe trained with the method's rows.
    pub method: &'a TestOutcome,
    /// Predictions of the probe trained on the real rows alone.
    pub baseline: &'a TestOutcome,
}

/// Why a difference has no interval.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "reason", rename_all = "kebab-case")]
pub enum NoInterval {
    /// Fewer than two folds had a value.
    TooFewFolds {
        /// How many folds had one.
        folds: usize,
    },
    /// Every fold (or every resample) moved by exactly the same amount: no spread to measure.
    NoVariation {
        /// How many folds had a value.
        folds: usize,
    },
    /// The classes the figure rests on have too few test rows per fold.
    FewTestRows {
        /// Mean test rows per fold of those classes.
        per_fold: f64,
    },
}

impl std::fmt::Display for NoInterval {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            NoInterval::TooFewFolds { folds } => {
                write!(
                    f,
                    "no interval ({folds} fold{} with a value)",
                    plural(*folds)
                )
            }
            NoInterval::NoVariation { folds } => {
                write!(
                    f,
                    "no interval ({folds} fold{}, no variation)",
                    plural(*folds)
                )
            }
            NoInterval::FewTestRows { per_fold } => write!(
                f,
                "no interval ({per_fold:.1} test rows per fold, fewer than {MIN_TEST_ROWS_PER_FOLD})"
            ),
        }
    }
}

fn plural(n: usize) -> &'static str {
    if n == 1 { "" } else { "s" }
}

/// A paired difference with its interval, or the reason it has none.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PairedEstimate {
    /// Estimated difference (method − baseline).
    pub delta: f64,
    /// Bounds and two-sided p-value of "difference = 0"; NaN when there is no interval.
    pub low: f64,
    /// Upper bound (see `low`).
    pub high: f64,
    /// Two-sided p-value (see `low`).
    pub p_value: f64,
    /// Folds in which the figure had a value for both method and baseline.
    pub folds: usize,
    /// Set when there is no interval; the bounds and p are NaN then.
    pub no_interval: Option<NoInterval>,
    /// Fold differences that were exactly zero (of `folds`).
    pub zero_folds: usize,
}

impl PairedEstimate {
    fn without(delta: f64, folds: usize, zero_folds: usize, why: NoInterval) -> Self {
        PairedEstimate {
            delta,
            low: f64::NAN,
            high: f64::NAN,
            p_value: f64::NAN,
            folds,
            no_interval: Some(why),
            zero_folds,
        }
    }

    /// True when the interval exists and excludes zero.
    pub fn significant(&self) -> bool {
        self.no_interval.is_none() && (self.low > 0.0 || self.high < 0.0)
    }
}

/// The paired differences of `metrics` between method and baseline over `folds`, with
/// intervals of `kind` at `level` (e.g. 0.95). `seed` drives the bootstrap.
///
/// Every kind shares the same degenerate-case rules: fewer than two folds with a value, or no
/// spread at all, or too few test rows per fold in the classes a figure rests on, give the
/// estimate with no interval (NaN bounds and p, never p = 0 or 1 from a zero variance).
pub fn paired(
    kind: IntervalKind,
    folds: &[PairedFold],
    metrics: &[PooledMetric],
    n_classes: usize,
    level: f64,
    seed: u64,
) -> Vec<PairedEstimate> {
    let fold_level = corrected_t::fold_differences(folds, metrics, n_classes);
    let pooled = counts::pooled_deltas(folds, metrics, n_classes);
    let needs_boot = match kind {
        IntervalKind::Bootstrap => true,
        IntervalKind::CvClt | IntervalKind::CvCltFolds => {
            metrics.iter().any(|m| !m.is_row_linear())
        }
        IntervalKind::CorrectedT => false,
    };
    let boot = needs_boot.then(|| bootstrap::replicates(folds, metrics, n_classes, seed));
    let clt = matches!(kind, IntervalKind::CvClt | IntervalKind::CvCltFolds)
        .then(|| cv_clt::standard_errors(folds, metrics, n_classes));
    let between = (kind == IntervalKind::CvCltFolds)
        .then(|| corrected_t::within_repeat_variance(folds, metrics, n_classes));
    let single_repeat = (kind == IntervalKind::CvCltFolds)
        .then(|| cv_clt::single_repeat_errors(folds, metrics, n_classes));
    let per_fold = counts::rows_per_fold(folds, metrics, n_classes);
    metrics
        .iter()
        .enumerate()
        .map(|(j, metric)| {
            let diffs = &fold_level[j];
            let n = diffs.len();
            let zero = diffs.iter().filter(|&&d| d == 0.0).count();
            let delta = match kind {
                IntervalKind::CorrectedT => mean(diffs),
                _ => pooled[j],
            };
            if n < 2 {
                return PairedEstimate::without(
                    delta,
                    n,
                    zero,
                    NoInterval::TooFewFolds { folds: n },
                );
            }
            if metric.is_class_figure() && per_fold[j] < MIN_TEST_ROWS_PER_FOLD {
                return PairedEstimate::without(
                    delta,
                    n,
                    zero,
                    NoInterval::FewTestRows {
                        per_fold: per_fold[j],
                    },
                );
            }
            if diffs.iter().all(|&d| d == diffs[0]) {
                return PairedEstimate::without(
                    delta,
                    n,
                    zero,
                    NoInterval::NoVariation { folds: n },
                );
            }
            let bounds = match kind {
                IntervalKind::CorrectedT => {
                    let (n_train, n_test) = corrected_t::mean_sizes(folds);
                    corrected_t::interval(diffs, n_train, n_test, level)
                }
                IntervalKind::CvClt | IntervalKind::CvCltFolds => {
                    let se = if metric.is_row_linear() {
                        clt.as_ref().map_or(f64::NAN, |s| s[j])
                    } else {
                        boot.as_ref()
                            .map_or(f64::NAN, |b| bootstrap::std_dev(&b[j]))
                    };
                    match &between {
                        Some(v) => {
                            let k = folds.len() as f64
                                / (folds.iter().map(|f| f.repeat + 1).max().unwrap_or(1)) as f64;
                            let single = if metric.is_row_linear() {
                                single_repeat.as_ref().map_or(f64::NAN, |s| s[j])
                            } else {
                                se
                            };
                            let (n_train, n_test) = corrected_t::mean_sizes(folds);
                            let overlap = 1.0 + (k - 1.0) * n_test / n_train;
                            cv_clt::interval_with_folds(
                                delta,
                                se,
                                single,
                                v[j] * overlap,
                                overlap,
                                k,
                                level,
                            )
                        }
                        None => cv_clt::interval(delta, se, level),
                    }
                }
                IntervalKind::Bootstrap => boot
                    .as_ref()
                    .and_then(|b| bootstrap::percentile(&b[j], level)),
            };
            match bounds {
                Some((low, high, p_value)) => PairedEstimate {
                    delta,
                    low,
                    high,
                    p_value,
                    folds: n,
                    no_interval: None,
                    zero_folds: zero,
                },
                None => {
                    PairedEstimate::without(delta, n, zero, NoInterval::NoVariation { folds: n })
                }
            }
        })
        .collect()
}

/// The arithmetic mean; NaN for no values.
fn mean(v: &[f64]) -> f64 {
    if v.is_empty() {
        f64::NAN
    } else {
        v.iter().sum::<f64>() / v.len() as f64
    }
}
