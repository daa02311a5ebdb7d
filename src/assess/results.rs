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
    /// The input path as given (or a label such as "street-signs (demo)" for data not read
    /// from a file).
    pub path: String,
    /// SHA-256 of the input file's bytes, lowercase hex; empty when there was no file.
    pub sha256: String,
    /// Real rows read (after any rows dropped for NaN/Inf).
    pub rows: usize,
    /// Dimension of each embedding row.
    pub dims: usize,
    /// Class names, in class-index order (every index in the results refers to this list).
    pub classes: Vec<String>,
    /// Real rows per class, aligned with `classes`.
    pub class_counts: Vec<usize>,
    /// The separate labels file, when the labels were not stored beside the embeddings
    /// (an `.npy` matrix with its labels in another file): a result names both inputs.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub labels_file: Option<HashedFile>,
}

/// A file an assessment read, named by path and SHA-256.
#[derive(Debug, Clone, Serialize, PartialEq, Eq)]
pub struct HashedFile {
    /// The path as given.
    pub path: String,
    /// Hex SHA-256 of the file's bytes.
    pub sha256: String,
}

/// One method × probe evaluated on one fold.
#[derive(Debug, Clone, Serialize)]
pub struct FoldRecord {
    /// Repeat index, from 0: each repeat reshuffles the folds with its own seed stream.
    pub repeat: usize,
    /// Fold index within the repeat, from 0.
    pub fold: usize,
    /// The method whose synthetic rows joined the training fold (`none` adds none).
    pub method: MethodId,
    /// The probe fitted on the training fold and scored on the held-out fold.
    pub probe: ProbeKind,
    /// Real training rows in this fold.
    pub train_real: usize,
    /// Synthetic training rows the method added in this fold (0 for `none`).
    pub train_synthetic: usize,
    /// Held-out rows scored; always real rows only.
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
    /// The method summarised.
    pub method: MethodId,
    /// The probe the figures come from.
    pub probe: ProbeKind,
    /// The metric summarised.
    pub metric: Metric,
    /// Mean of the metric over folds and repeats, on the metric's own scale.
    pub mean: f64,
    /// Mean paired difference, method minus `none`, over the same folds (0 for `none`).
    pub delta_mean: f64,
    /// Lower bound of the interval on `delta_mean` (corrected resampled t, or the interval
    /// kind the config names); NaN when there is none.
    pub delta_ci_low: f64,
    /// Upper bound of the interval on `delta_mean`; NaN when there is none.
    pub delta_ci_high: f64,
    /// Two-sided p-value of "no difference from `none`"; NaN when there is no interval.
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

/// One class's recall, precision and F1 under a method and probe, each with its paired
/// difference against `none` (`delta_*` without a prefix is recall's, as it always was).
#[derive(Debug, Clone, Serialize)]
pub struct ClassRow {
    /// The method summarised.
    pub method: MethodId,
    /// The probe the figures come from.
    pub probe: ProbeKind,
    /// The class's name.
    pub class: String,
    /// Whether the plan grew this class (the classes a method is meant to help).
    pub grown: bool,
    /// Mean recall of the class over the folds where it had test rows, in [0, 1].
    pub recall_mean: f64,
    /// Precision and F1 of the class from the confusion counts pooled over each repeat's test
    /// folds (Forman & Scholz 2010), averaged over repeats.
    pub precision_pooled: f64,
    /// F1 of the class from the same pooled confusion counts, in [0, 1].
    pub f1_pooled: f64,
    /// Paired precision difference, method minus `none`, under the same interval kind as
    /// recall (a precision is undefined in a fold where the class is never predicted).
    pub precision_delta_mean: f64,
    /// Lower bound of the interval on `precision_delta_mean`; NaN when there is none.
    pub precision_delta_ci_low: f64,
    /// Upper bound of the interval on `precision_delta_mean`; NaN when there is none.
    pub precision_delta_ci_high: f64,
    /// Two-sided p-value of "no precision difference from `none`"; NaN without an interval.
    pub precision_p_value: f64,
    /// Paired F1 difference, method minus `none`.
    pub f1_delta_mean: f64,
    /// Lower bound of the interval on `f1_delta_mean`; NaN when there is none.
    pub f1_delta_ci_low: f64,
    /// Upper bound of the interval on `f1_delta_mean`; NaN when there is none.
    pub f1_delta_ci_high: f64,
    /// Two-sided p-value of "no F1 difference from `none`"; NaN when there is no interval.
    pub f1_p_value: f64,
    /// Mean paired recall difference, method minus `none`.
    pub delta_mean: f64,
    /// Lower bound of the interval on `delta_mean`; NaN when there is none.
    pub delta_ci_low: f64,
    /// Upper bound of the interval on `delta_mean`; NaN when there is none.
    pub delta_ci_high: f64,
    /// Two-sided p-value of "no recall difference from `none`"; NaN when there is no interval.
    pub p_value: f64,
    /// Folds in which the class had test rows (so a recall) under both method and `none`.
    pub folds: usize,
    /// Why there is no interval, when there is none.
    pub no_interval: Option<String>,
}

/// Where a method's synthetic rows of one grown class sit, averaged over folds.
#[derive(Debug, Clone, Serialize)]
pub struct DiagnosticRow {
    /// The method whose synthetic rows are described.
    pub method: MethodId,
    /// The grown class's name.
    pub class: String,
    /// Synthetic rows of the class per fold, averaged over folds.
    pub synthetic_rows: f64,
    /// Share of synthetic rows whose nearest real training row is of another class.
    pub intrusion_synthetic: f64,
    /// The same share for the class's real rows (the baseline to compare with).
    pub intrusion_real: f64,
    /// Median synthetic-to-nearest-real distance ÷ median real-to-nearest-real distance, in
    /// the measure `distance_measure` names (under cosine the angle, not 1 − cos).
    pub distance_ratio: f64,
    /// The distance `distance_ratio` is measured in (the neighbour metric's name).
    pub distance_measure: String,
    /// The smallest PRDC k any fold used for the class (k shrinks with few held-out rows);
    /// below 2 the PRDC figures of that fold are not available.
    pub prdc_k: f64,
    /// PRDC precision: share of synthetic rows inside the real rows' k-NN balls, in [0, 1]
    /// (Naeem et al. 2020); NaN when no fold had k of at least 2.
    pub precision: f64,
    /// PRDC recall: share of real rows inside the synthetic rows' k-NN balls, in [0, 1].
    pub recall: f64,
    /// PRDC density: mean count of real balls holding each synthetic row, ÷ k; 1 is what
    /// real-like rows give, and it may exceed 1.
    pub density: f64,
    /// PRDC coverage: share of real rows whose ball holds at least one synthetic row, in [0, 1].
    pub coverage: f64,
}

/// A 2-D PCA projection of one grown class's real and synthetic training rows and of its
/// nearest rival classes (first fold), on directions fitted to the class and rivals together.
#[derive(Debug, Clone, Serialize)]
pub struct Scatter {
    /// The method whose synthetic rows are drawn.
    pub method: MethodId,
    /// The grown class's name.
    pub class: String,
    /// The class's real training rows, projected on the first two principal directions of
    /// the class and its rivals.
    pub real: Vec<[f32; 2]>,
    /// The method's synthetic rows of the class, in the same projection.
    pub synthetic: Vec<[f32; 2]>,
    /// Real training rows of the rival classes, in the same projection.
    pub others: Vec<[f32; 2]>,
    /// The rival classes: those whose nearest rows lie closest to the class's mean, nearest
    /// first.
    pub rivals: Vec<String>,
    /// For each row of `others`, its class as an index into `rivals`.
    pub others_rival: Vec<usize>,
}

/// Which class a probe took each test row for, under one method, summed over every test fold
/// of every repeat.
#[derive(Debug, Clone, Serialize)]
pub struct Confusion {
    /// The method whose rows joined the training folds.
    pub method: MethodId,
    /// The probe whose predictions are counted.
    pub probe: ProbeKind,
    /// Test rows counted: the sum of every cell (rows × repeats under a full split).
    pub test_rows: usize,
    /// The non-zero cells as `[true class, predicted class, count]`, classes as indices into
    /// `input.classes`; a cell not listed is zero. The diagonal holds the correct predictions.
    pub cells: Vec<[u64; 3]>,
}

/// One (true class, predicted class) cell whose count changed against `none`.
#[derive(Debug, Clone, Serialize)]
pub struct ConfusionChange {
    /// The method compared with `none`.
    pub method: MethodId,
    /// The probe whose predictions are counted.
    pub probe: ProbeKind,
    /// The class the test rows belong to.
    pub true_class: String,
    /// The other class the probe took them for.
    pub predicted_class: String,
    /// Rows of `true_class` predicted as `predicted_class` by the probe trained without
    /// synthetic rows, summed over the same folds.
    pub baseline_count: u64,
    /// The same count under the method.
    pub count: u64,
    /// `count − baseline_count`: positive means more rows mistaken this way than without the
    /// method, negative fewer.
    pub change: i64,
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
    /// The version of embloom that produced the results (from Cargo.toml).
    pub embloom_version: String,
    /// The command line that produced the results, shell-quoted (empty when the library was
    /// called directly), so a result can be reproduced.
    pub command_line: String,
    /// The input file and its class counts.
    pub input: InputInfo,
    /// The configuration as run (options after defaults were applied).
    pub config: ResultsConfig,
    /// The seed every fold split and method draw derives from; the same seed and input give
    /// the same results on any thread count.
    pub seed: u64,
    /// How the folds were made (stratified, by group, or the input's own folds).
    pub split: SplitKind,
    /// The methods assessed, `none` first.
    pub methods: Vec<MethodId>,
    /// The probes fitted on every training fold.
    pub probes: Vec<ProbeKind>,
    /// Names of the classes the plan grew (in the full data; per fold the plan is recomputed).
    pub grown_classes: Vec<String>,
    /// One record per repeat × fold × method × probe.
    pub folds: Vec<FoldRecord>,
    /// One row per method × probe × metric.
    pub summary: Vec<SummaryRow>,
    /// One row per method × probe × class.
    pub per_class: Vec<ClassRow>,
    /// Confusion counts per method × probe (`none` included), summed over every test fold of
    /// every repeat.
    pub confusion: Vec<Confusion>,
    /// The off-diagonal cells whose count moved most against `none`, per method × probe: the
    /// largest rises, then the largest falls.
    pub confusion_changes: Vec<ConfusionChange>,
    /// One row per method × grown class; empty unless diagnostics were asked for.
    pub diagnostics: Vec<DiagnosticRow>,
    /// One projection per method × grown class; empty unless diagnostics were asked for.
    pub scatter: Vec<Scatter>,
    /// One plain sentence per method and probe.
    pub sentences: Vec<String>,
    /// Things the user should hear about (thin classes, a probe that did not converge,
    /// clamped or skipped classes), in parameter names; the binary prints them.
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
