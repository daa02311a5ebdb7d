//! The validated configuration of an assessment.

use std::collections::BTreeMap;

use serde::ser::SerializeMap;
use serde::{Serialize, Serializer};

use crate::augment::{AugmentParams, MethodKind, Target, UnitNorm};
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
    pub probes: Vec<ProbeKind>,
    pub folds: usize,
    pub repeats: usize,
    pub target: Target,
    pub classes: Option<Vec<String>>,
    pub augment: AugmentParams,
    pub unit_norm: UnitNorm,
    pub knn: KnnParams,
    pub linear: LinearParams,
    pub seed: u64,
    /// How the intervals of paired differences are computed.
    pub interval: IntervalKind,
    /// Compute intrusion / distance / PRDC diagnostics.
    pub diagnostics: bool,
}

impl AssessConfig {
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
                "use knn, linear or knn,linear",
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

/// The configuration as results.json records it: the command-line spellings (the target as
/// `median`, `50` or `x2`), the magnitude written out per method when left to its default,
/// and every number that came from an f32 at its shortest f32 spelling (0.3, not
/// 0.30000001192092896). Its own type, not the parameter structs, so the record keeps its shape
/// when those change. Fields are in key order: the JSON has always listed them sorted.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ResultsConfig {
    pub augment: AugmentRecord,
    pub classes: Option<Vec<String>>,
    pub diagnostics: bool,
    pub folds: usize,
    pub interval: IntervalKind,
    pub knn: KnnRecord,
    pub linear: LinearRecord,
    pub methods: Vec<MethodKind>,
    pub probes: Vec<ProbeKind>,
    pub repeats: usize,
    pub seed: u64,
    pub target: Target,
    pub unit_norm: UnitNorm,
}

/// The augmentation parameters as run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AugmentRecord {
    pub index: IndexKind,
    pub magnitude: MagnitudeRecord,
    pub metric: NeighbourMetric,
    pub neighbours: usize,
    pub strict: bool,
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
                strict: a.strict,
                tau: a.tau,
                variance_kept: a.variance_kept,
            },
            classes: cfg.classes.clone(),
            diagnostics: cfg.diagnostics,
            folds: cfg.folds,
            interval: cfg.interval,
            knn: KnnRecord {
                k: cfg.knn.k,
                metric: cfg.knn.metric,
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
