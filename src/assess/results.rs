//! What an assessment produces. This is the single source for the terminal table, the JSON,
//! the CSV tables and the HTML report, so every output tells the same story.

use serde::ser::SerializeMap;
use serde::{Serialize, Serializer};

use super::config::ResultsConfig;
use super::method_id::MethodId;
use crate::eval::Metric;
use crate::eval::interval::TestOutcome;
use crate::eval::protocol::SplitKind;
use crate::probe::ProbeKind;

/// The input file an assessment ran on.
#[derive(Debug, Clone, Serialize)]
pub struct InputInfo {
    pub path: String,
    pub sha256: String,
    pub rows: usize,
    pub dims: usize,
    pub classes: Vec<String>,
    pub class_counts: Vec<usize>,
}

/// One method × probe evaluated on one fold.
#[derive(Debug, Clone, Serialize)]
pub struct FoldRecord {
    pub repeat: usize,
    pub fold: usize,
    pub method: MethodId,
    pub probe: ProbeKind,
    pub train_real: usize,
    pub train_synthetic: usize,
    pub test: usize,
    /// Metric → value: the pooled metrics, and for the linear probe log loss and ECE.
    /// Serialised as a JSON object keyed by [`Metric::key`], in this order.
    #[serde(serialize_with = "ordered_map")]
    pub metrics: Vec<(Metric, f64)>,
    /// Recall per class index (NaN where the class has no test rows in this fold).
    pub class_recall: Vec<f64>,
    /// Linear probe only: whether L-BFGS met its tolerance.
    pub converged: Option<bool>,
    /// Every test row's input row, true class and prediction: what the row-level intervals
    /// and the pooled scores are computed from (not written out).
    #[serde(skip)]
    pub outcome: TestOutcome,
}

impl FoldRecord {
    /// Bytes one record holds until the report is written (the record, its recall per class
    /// and their JSON and CSV text), for the memory estimate. Records are the only part that
    /// grows with `--repeats`. Measured on 60 rows × 16, 3 classes, 2 folds: 6.0 MB peak RSS
    /// at 1 repeat, 7.4 MB at 50, 36 MB at 1000, about 2.5 KiB per record; 2 KiB plus 64
    /// bytes a class covers it.
    pub fn estimated_bytes(classes: usize) -> u64 {
        2048 + 64 * classes as u64
    }
}

/// A method's mean on one metric and its paired difference against `none`.
#[derive(Debug, Clone, Serialize)]
pub struct SummaryRow {
    pub method: MethodId,
    pub probe: ProbeKind,
    pub metric: Metric,
    pub mean: f64,
    pub delta_mean: f64,
    pub delta_ci_low: f64,
    pub delta_ci_high: f64,
    pub p_value: f64,
    /// Folds in which the figure had a value for both the method and `none`.
    pub folds: usize,
    /// Why there is no interval (bounds and p are then empty), e.g. "no interval (5 folds, no
    /// variation)".
    pub no_interval: Option<String>,
    /// False when the method does not apply to the probe (logit-adjust with k-NN): every
    /// figure is then empty and `no_interval` says why.
    pub applies: bool,
}

/// One class's recall under a method and probe, with its paired difference against `none`.
#[derive(Debug, Clone, Serialize)]
pub struct ClassRow {
    pub method: MethodId,
    pub probe: ProbeKind,
    pub class: String,
    pub grown: bool,
    pub recall_mean: f64,
    /// Precision and F1 of the class from the confusion counts pooled over each repeat's test
    /// folds (Forman & Scholz 2010), averaged over repeats.
    pub precision_pooled: f64,
    pub f1_pooled: f64,
    pub delta_mean: f64,
    pub delta_ci_low: f64,
    pub delta_ci_high: f64,
    pub p_value: f64,
    /// Folds in which the class had test rows (so a recall) under both method and `none`.
    pub folds: usize,
    /// Why there is no interval, when there is none.
    pub no_interval: Option<String>,
}

/// Where a method's synthetic rows of one grown class sit, averaged over folds.
#[derive(Debug, Clone, Serialize)]
pub struct DiagnosticRow {
    pub method: MethodId,
    pub class: String,
    pub synthetic_rows: f64,
    /// Share of synthetic rows whose nearest real training row is of another class.
    pub intrusion_synthetic: f64,
    /// The same share for the class's real rows (the baseline to compare with).
    pub intrusion_real: f64,
    /// Median synthetic-to-nearest-real distance ÷ median real-to-nearest-real distance, in
    /// the measure `distance_measure` names (under cosine the angle, not 1 − cos).
    pub distance_ratio: f64,
    pub distance_measure: String,
    /// The smallest PRDC k any fold used for the class (k shrinks with few held-out rows);
    /// below 2 the PRDC figures of that fold are not available.
    pub prdc_k: f64,
    pub precision: f64,
    pub recall: f64,
    pub density: f64,
    pub coverage: f64,
}

/// A 2-D PCA projection of one grown class's real and synthetic training rows (first fold).
#[derive(Debug, Clone, Serialize)]
pub struct Scatter {
    pub method: MethodId,
    pub class: String,
    pub real: Vec<[f32; 2]>,
    pub synthetic: Vec<[f32; 2]>,
    /// Real rows of the other classes nearest to this class, for context.
    pub others: Vec<[f32; 2]>,
}

/// How much shared work an assessment did, counted as it ran (so a benchmark can show that
/// the sharing happens). Counts only; they do not depend on the thread count.
#[derive(Debug, Clone, Default, Serialize)]
pub struct WorkCounters {
    /// k-NN searches of test rows against a fold's real training rows (one per fold).
    pub test_real_knn_passes: usize,
    /// k-NN searches of test rows against one method's synthetic rows (merged with the
    /// shared real list).
    pub test_synthetic_knn_passes: usize,
    /// Linear-probe fits that started from the fold's `none` solution.
    pub linear_warm_starts: usize,
    /// Linear-probe fits in all.
    pub linear_fits: usize,
    /// L-BFGS iterations summed over all linear-probe fits.
    pub linear_iterations_total: usize,
}

/// Everything `assess` found.
#[derive(Debug, Clone, Serialize)]
pub struct AssessResults {
    pub embloom_version: String,
    /// The command line that produced the results, shell-quoted (empty when the library was
    /// called directly), so a result can be reproduced.
    pub command_line: String,
    pub input: InputInfo,
    /// The configuration as run (options after defaults were applied).
    pub config: ResultsConfig,
    pub seed: u64,
    pub split: SplitKind,
    pub methods: Vec<MethodId>,
    pub probes: Vec<ProbeKind>,
    /// Names of the classes the plan grew (in the full data; per fold the plan is recomputed).
    pub grown_classes: Vec<String>,
    pub folds: Vec<FoldRecord>,
    pub summary: Vec<SummaryRow>,
    pub per_class: Vec<ClassRow>,
    pub diagnostics: Vec<DiagnosticRow>,
    pub scatter: Vec<Scatter>,
    /// One plain sentence per method and probe.
    pub sentences: Vec<String>,
    pub warnings: Vec<String>,
    /// Shared-work counters.
    pub work: WorkCounters,
    /// Wall-clock seconds (excluded when outputs are compared for determinism).
    pub elapsed_seconds: f64,
}

/// Metric → value pairs as a JSON object that keeps their order.
fn ordered_map<S: Serializer>(pairs: &[(Metric, f64)], s: S) -> Result<S::Ok, S::Error> {
    let mut map = s.serialize_map(Some(pairs.len()))?;
    for (k, v) in pairs {
        map.serialize_entry(k.key(), v)?;
    }
    map.end()
}
