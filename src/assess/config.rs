//! The validated configuration of an assessment.

use serde::Serialize;

use crate::augment::{AugmentParams, MethodKind, Target, UnitNorm};
use crate::error::{Error, Result};
use crate::eval::interval::IntervalKind;
use crate::probe::KnnParams;
use crate::probe::LinearParams;
use crate::probe::ProbeKind;

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
    /// The configuration as results.json records it: the target as spelled on the command
    /// line, the magnitude written out per method when left to its default, and every number
    /// that came from an f32 at its shortest f32 spelling (0.3, not 0.30000001192092896).
    pub fn to_json(&self) -> serde_json::Value {
        let mut v = serde_json::to_value(self).unwrap_or(serde_json::Value::Null);
        if self.augment.magnitude.is_none()
            && let Some(aug) = v.get_mut("augment")
        {
            let defaults: serde_json::Map<String, serde_json::Value> = self
                .methods
                .iter()
                .filter(|m| **m != MethodKind::None)
                .map(|m| {
                    (
                        m.name().to_string(),
                        f32_spelling(f64::from(m.default_magnitude())),
                    )
                })
                .collect();
            aug["magnitude"] = serde_json::Value::Object(defaults);
        }
        shorten_f32(&mut v);
        v
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

/// A float that is exactly an f32 written as its shortest f32 spelling.
fn f32_spelling(x: f64) -> serde_json::Value {
    let short = if x.is_finite() && f64::from(x as f32) == x {
        format!("{}", x as f32).parse::<f64>().unwrap_or(x)
    } else {
        x
    };
    serde_json::Number::from_f64(short).map_or(serde_json::Value::Null, serde_json::Value::Number)
}

fn shorten_f32(v: &mut serde_json::Value) {
    match v {
        serde_json::Value::Number(n) if n.is_f64() => {
            if let Some(x) = n.as_f64() {
                *v = f32_spelling(x);
            }
        }
        serde_json::Value::Array(a) => a.iter_mut().for_each(shorten_f32),
        serde_json::Value::Object(o) => o.values_mut().for_each(shorten_f32),
        _ => {}
    }
}
