//! The leakage-free assessment protocol, metrics, statistics and diagnostics.
//!
//! These are pure building blocks: [`protocol`] makes the splits, [`metrics`] scores one
//! prediction set, [`stats`] holds the Student-t machinery, [`interval`] turns paired test-row outcomes into
//! an interval (one method per file), and
//! [`diagnostics`] describes where a fold's synthetic rows sit. The orchestration that fits
//! augmenters and probes per fold lives elsewhere and only calls these.

pub mod diagnostics;
pub mod interval;
pub mod metric;
pub mod metrics;
pub mod protocol;
pub mod stats;

pub use diagnostics::{ClassDiagnostics, PRDC_K, Prdc, TrainingRows, class_diagnostics, prdc};
pub use interval::{
    IntervalKind, NoInterval, PairedEstimate, PairedFold, PooledMetric, TestOutcome,
};
pub use metric::Metric;
pub use metrics::{ClassScores, Scores, ece, grown_class_recall, log_loss, score};
pub use protocol::{Fold, SplitKind, make_folds, thin_classes};
pub use stats::{Interval, corrected_paired_t, t_cdf, t_quantile};
