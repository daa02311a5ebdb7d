//! The validated configuration of an assessment.

use std::collections::BTreeMap;
use std::fmt;
use std::str::FromStr;

use serde::ser::SerializeMap;
use serde::{Serialize, Serializer};

use super::method_id::MethodId;
use crate::augment::{AugmentParams, MethodKind, PairPath, Target, UnitNorm};
use crate::error::{Error, Result};
use crate::eval::interval::IntervalKind;
use crate::neighbors::{IndexKind, Metric as NeighbourMetric};
use crate::probe::{ClassWeight, KnnParams, LinearParams, ProbeKind, Vote};

/// The most repeats of the fold split an assessment accepts.
pub const MAX_REPEATS: usize = 1000;

/// Everything an assessment needs besides the data.
#[derive(Debug, Clone, Serialize)]
pub struct AssessConfig {
    /// Methods to compare; `none` (the baseline) is always first.
    pub methods: Vec<MethodKind>,
    /// Probes fitted on every training fold; each method is scored under each probe.
    pub probes: Vec<ProbeKind>,
    /// Folds per repeat (at least 2); a class with fewer rows than folds is missing from
    /// some test folds.
    pub folds: usize,
    /// Repeats of the fold split, each with a fresh shuffle (1 to `MAX_REPEATS`, 1000); more
    /// repeats narrow the intervals.
    pub repeats: usize,
    /// How many rows each class is grown to, recomputed on every training fold.
    pub target: Target,
    /// Grow only these classes (by name); `None` lets `target` pick them.
    pub classes: Option<Vec<String>>,
    /// The shared method parameters (K, magnitude, variance kept, strictness).
    pub augment: AugmentParams,
    /// Whether synthetic rows are put back on the unit sphere.
    pub unit_norm: UnitNorm,
    /// The k-NN probe's parameters.
    pub knn: KnnParams,
    /// The linear probe's parameters.
    pub linear: LinearParams,
    /// The seed every split and draw derives from; results are the same for a seed on any
    /// thread count.
    pub seed: u64,
    /// How the intervals of paired differences are computed.
    pub interval: IntervalKind,
    /// Compute intrusion / distance / PRDC diagnostics.
    pub diagnostics: bool,
}

/// The k-NN probe's k was more than a fold's training rows and was lowered to them.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct KnnClamp {
    /// The k asked for.
    pub asked: usize,
    /// The training rows of a fold (the smallest, with the last fold's remainder).
    pub train_rows: usize,
    /// The k used instead.
    pub used: usize,
}

impl AssessConfig {
    /// Lower the k-NN probe's k to the training rows of a fold of `rows` rows: more neighbours
    /// than rows is meaningless, and a huge k would size buffers by it. Returns what changed,
    /// for the caller to tell its user.
    pub fn clamp_knn_k(&mut self, rows: usize) -> Option<KnnClamp> {
        let train = rows - rows / self.folds.max(2);
        if self.knn.k <= train.max(1) {
            return None;
        }
        let asked = self.knn.k;
        self.knn.k = train.max(1);
        Some(KnnClamp {
            asked,
            train_rows: train,
            used: self.knn.k,
        })
    }

    /// The configuration as results.json records it.
    pub fn record(&self) -> ResultsConfig {
        ResultsConfig::of(self)
    }

    /// Check ranges and put `none` first (added when missing, duplicates removed).
    pub fn validated(mut self) -> Result<Self> {
        let mut methods = vec![MethodKind::None];
        for m in self.methods {
            if !methods.contains(&m) {
                methods.push(m);
            }
        }
        self.methods = methods;
        if self.probes.is_empty() {
            return Err(Error::param(
                "probes",
                "no probe given",
                "use one or more of knn, linear and centroid (knn,linear is the usual pair)",
            ));
        }
        self.probes.dedup();
        if self.folds < 2 {
            return Err(Error::param(
                "folds",
                format!("{} folds cannot hold out data", self.folds),
                "use 2 or more folds (5 is usual)",
            ));
        }
        if self.repeats < 1 {
            return Err(Error::param(
                "repeats",
                "must be at least 1",
                "use 1 or more repeats",
            ));
        }
        // Per-fold results are kept for the report, so memory and time grow with repeats;
        // past this, more repeats no longer move the corrected intervals in any reported digit.
        if self.repeats > MAX_REPEATS {
            return Err(Error::param(
                "repeats",
                format!(
                    "{} is more than the {MAX_REPEATS} embloom allows",
                    self.repeats
                ),
                "use 10 (a common choice for repeated cross-validation) or at most 1000",
            ));
        }
        self.knn.validate()?;
        self.linear.validate()?;
        Ok(self)
    }
}

/// How many of an external set's eligible rows (those whose parent is a training row of the
/// fold) a fold trains on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum ExternalBudget {
    /// Per grown class, as many rows as the feature-space methods add there under the same
    /// target, drawn at random (seeded) without replacement while rows last, so an input-space
    /// set is compared with feature-space methods at equal row counts.
    #[default]
    Match,
    /// Every eligible row, in every class.
    All,
    /// At most this many rows per class, drawn as `Match` draws them.
    PerClass(usize),
}

impl fmt::Display for ExternalBudget {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ExternalBudget::Match => f.write_str("match"),
            ExternalBudget::All => f.write_str("all"),
            ExternalBudget::PerClass(n) => write!(f, "{n}"),
        }
    }
}

impl FromStr for ExternalBudget {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        match s {
            "match" => Ok(ExternalBudget::Match),
            "all" => Ok(ExternalBudget::All),
            n => n
                .parse::<usize>()
                .map(ExternalBudget::PerClass)
                .map_err(|_| {
                    Error::param(
                        "external-budget",
                        format!("'{s}' is not match, all or a count"),
                        "use match (as many rows as the feature-space methods add), all, or a count per class such as 50",
                    )
                }),
        }
    }
}

/// In JSON a number for a count, else `match` / `all`.
impl Serialize for ExternalBudget {
    fn serialize<S: Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        match self {
            ExternalBudget::PerClass(n) => s.serialize_u64(*n as u64),
            other => s.serialize_str(&other.to_string()),
        }
    }
}

/// The input-space side of an assessment: how many rows each external set contributes per
/// fold, and the unions (`flips+interpolate`) trained on as methods of their own.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ExternalConfig {
    /// How many eligible rows of each set are drawn per grown class and fold.
    pub budget: ExternalBudget,
    /// Each a [`MethodId::Union`] of two or more parts; a part is a method of the
    /// [`AssessConfig`], an external set or a grown file's rows, by name.
    pub unions: Vec<MethodId>,
}

/// What results.json records about the external sets.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ExternalRecord {
    /// The budget the sets were drawn under.
    pub budget: ExternalBudget,
    /// Each external set, in the order given.
    pub sets: Vec<ExternalSetInfo>,
    /// The unions assessed as methods.
    pub unions: Vec<MethodId>,
}

/// One external set as read: its name, the file and its SHA-256, and its rows.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ExternalSetInfo {
    /// The method name the set is assessed under.
    pub name: String,
    /// The file, as given.
    pub path: String,
    /// Hex SHA-256 of the file, so a result names the exact rows it used.
    pub sha256: String,
    /// Rows in the file (before any per-fold gating or budget).
    pub rows: usize,
}

/// The configuration as results.json records it: the command-line spellings (the target as
/// `median`, `50` or `x2`), the magnitude written out per method when left to its default,
/// and every number that came from an f32 at its shortest f32 spelling (0.3, not
/// 0.30000001192092896). Its own type, not the parameter structs, so the record keeps its shape
/// when those change. Fields are in key order: the JSON has always listed them sorted.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ResultsConfig {
    /// The augmentation parameters as run.
    pub augment: AugmentRecord,
    /// The classes named to grow, if any were.
    pub classes: Option<Vec<String>>,
    /// Whether diagnostics were computed.
    pub diagnostics: bool,
    /// External sets and unions, when the assessment had any.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub external: Option<ExternalRecord>,
    /// Folds per repeat.
    pub folds: usize,
    /// How the intervals were computed.
    pub interval: IntervalKind,
    /// The k-NN probe's parameters as run.
    pub knn: KnnRecord,
    /// The linear probe's parameters as run.
    pub linear: LinearRecord,
    /// The methods compared, `none` first.
    pub methods: Vec<MethodKind>,
    /// The probes fitted.
    pub probes: Vec<ProbeKind>,
    /// Repeats of the fold split.
    pub repeats: usize,
    /// The seed.
    pub seed: u64,
    /// The growth target, written as the command line spells it (`median`, `50`, `x2`).
    pub target: Target,
    /// Whether synthetic rows were renormalised.
    pub unit_norm: UnitNorm,
}

/// The augmentation parameters as run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AugmentRecord {
    pub index: IndexKind,
    pub magnitude: MagnitudeRecord,
    pub metric: NeighbourMetric,
    pub neighbours: usize,
    /// The path interpolate and extrapolate place rows on.
    pub path: PairPath,
    /// k of calibrated.
    pub borrowed_classes: usize,
    /// m of borderline.
    pub danger_neighbours: usize,
    pub strict: bool,
    /// λ of calibrated's Tukey transform, `null` when off.
    pub tukey: Option<f64>,
    /// τ of logit-adjust.
    pub tau: f64,
    #[serde(serialize_with = "f32_spelled")]
    pub variance_kept: f64,
}

/// The magnitude given, or (when none was) each method's default by method name.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(untagged)]
pub enum MagnitudeRecord {
    Given(#[serde(serialize_with = "f32_spelled")] f64),
    Defaults(#[serde(serialize_with = "f32_spelled_map")] BTreeMap<String, f64>),
}

/// The k-NN probe's parameters as run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct KnnRecord {
    pub k: usize,
    pub metric: NeighbourMetric,
    /// Whether features were standardised on each fold's real training rows.
    pub standardize: bool,
    #[serde(serialize_with = "f32_spelled")]
    pub temperature: f64,
    pub vote: Vote,
}

/// The linear probe's parameters as run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LinearRecord {
    pub class_weight: ClassWeight,
    #[serde(serialize_with = "f32_spelled")]
    pub l2: f64,
    pub max_iter: usize,
    pub standardize: bool,
    #[serde(serialize_with = "f32_spelled")]
    pub tol: f64,
}

impl ResultsConfig {
    /// The record of `cfg`, with defaults filled in as they were run.
    pub fn of(cfg: &AssessConfig) -> Self {
        let a = &cfg.augment;
        let magnitude = match a.magnitude {
            Some(m) => MagnitudeRecord::Given(f64::from(m)),
            None => MagnitudeRecord::Defaults(
                cfg.methods
                    .iter()
                    .filter(|m| **m != MethodKind::None)
                    .map(|m| (m.name().to_string(), f64::from(m.default_magnitude())))
                    .collect(),
            ),
        };
        ResultsConfig {
            augment: AugmentRecord {
                index: a.index,
                magnitude,
                metric: a.metric,
                neighbours: a.neighbours,
                path: a.path,
                borrowed_classes: a.borrowed_classes,
                danger_neighbours: a.danger_neighbours,
                strict: a.strict,
                tukey: a.tukey,
                tau: a.tau,
                variance_kept: a.variance_kept,
            },
            classes: cfg.classes.clone(),
            diagnostics: cfg.diagnostics,
            external: None,
            folds: cfg.folds,
            interval: cfg.interval,
            knn: KnnRecord {
                k: cfg.knn.k,
                metric: cfg.knn.metric,
                standardize: cfg.knn.standardize,
                temperature: f64::from(cfg.knn.temperature),
                vote: cfg.knn.vote,
            },
            linear: LinearRecord {
                class_weight: cfg.linear.class_weight,
                l2: cfg.linear.l2,
                max_iter: cfg.linear.max_iter,
                standardize: cfg.linear.standardize,
                tol: cfg.linear.tol,
            },
            methods: cfg.methods.clone(),
            probes: cfg.probes.clone(),
            repeats: cfg.repeats,
            seed: cfg.seed,
            target: cfg.target,
            unit_norm: cfg.unit_norm,
        }
    }
}

/// A float that is exactly an f32 at its shortest f32 spelling; any other as it is. An f64
/// option is written as given either way, since only an f32 gains digits on the way to f64.
fn f32_spelling(x: f64) -> f64 {
    if x.is_finite() && f64::from(x as f32) == x {
        format!("{}", x as f32).parse::<f64>().unwrap_or(x)
    } else {
        x
    }
}

fn f32_spelled<S: Serializer>(x: &f64, s: S) -> std::result::Result<S::Ok, S::Error> {
    // A non-finite number is JSON null, as serde_json writes one.
    let x = f32_spelling(*x);
    if x.is_finite() {
        s.serialize_f64(x)
    } else {
        s.serialize_unit()
    }
}

fn f32_spelled_map<S: Serializer>(
    m: &BTreeMap<String, f64>,
    s: S,
) -> std::result::Result<S::Ok, S::Error> {
    let mut map = s.serialize_map(Some(m.len()))?;
    for (k, v) in m {
        map.serialize_entry(k, &F32Spelled(*v))?;
    }
    map.end()
}

struct F32Spelled(f64);

impl Serialize for F32Spelled {
    fn serialize<S: Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        f32_spelled(&self.0, s)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn config(magnitude: Option<f32>) -> AssessConfig {
        AssessConfig {
            methods: vec![MethodKind::None, MethodKind::Extrapolate],
            probes: vec![ProbeKind::Knn],
            folds: 5,
            repeats: 1,
            target: Target::Factor(2.0),
            classes: None,
            augment: AugmentParams {
                magnitude,
                ..AugmentParams::default()
            },
            unit_norm: UnitNorm::Auto,
            knn: KnnParams::default(),
            linear: LinearParams::default(),
            seed: 7,
            interval: IntervalKind::CorrectedT,
            diagnostics: false,
        }
    }

    #[test]
    fn record_spells_options_as_the_command_line_does() {
        // Common practice, no source: an f32 option reads back as typed (0.3, 0.07), keys are
        // sorted, the target keeps its command-line spelling, a default magnitude is written
        // out per method.
        let text = serde_json::to_string(&config(Some(0.3)).record()).unwrap();
        assert!(
            text.starts_with(r#"{"augment":{"index":"exact","magnitude":0.3,"#),
            "{text}"
        );
        assert!(text.contains(r#""temperature":0.07,"#), "{text}");
        assert!(
            text.contains(r#""standardize":false,"temperature""#),
            "{text}"
        );
        assert!(
            text.contains(r#""target":"x2","unit_norm":"auto"}"#),
            "{text}"
        );
        let text = serde_json::to_string(&config(None).record()).unwrap();
        assert!(
            text.contains(r#""magnitude":{"extrapolate":0.5},"#),
            "{text}"
        );
    }
}
