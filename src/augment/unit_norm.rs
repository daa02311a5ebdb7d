//! Whether synthetic rows are rescaled to unit norm.

use std::str::FromStr;

use serde::Serialize;

use crate::data::is_unit_norm;
use crate::error::{Error, Result};

/// Whether synthetic rows are rescaled to unit norm.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum UnitNorm {
    /// Renormalise when every input row is unit-norm (embeddings from contrastive backbones
    /// usually are, and a probe on them expects rows on the sphere).
    Auto,
    /// Always renormalise synthetic rows to unit L2 norm.
    On,
    /// Never renormalise: keep synthetic rows as the method drew them.
    Off,
}

impl UnitNorm {
    /// Resolve `Auto` against the input matrix.
    pub fn resolve(self, x: ndarray::ArrayView2<f32>) -> bool {
        match self {
            UnitNorm::Auto => is_unit_norm(x),
            UnitNorm::On => true,
            UnitNorm::Off => false,
        }
    }
}

impl FromStr for UnitNorm {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        match s {
            "auto" => Ok(UnitNorm::Auto),
            "on" => Ok(UnitNorm::On),
            "off" => Ok(UnitNorm::Off),
            _ => Err(Error::param(
                "unit-norm",
                format!("'{s}' is not a choice"),
                "use auto, on or off",
            )),
        }
    }
}
