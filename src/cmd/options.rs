//! Options shared by several commands.

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
    On,
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
                "--unit-norm",
                format!("'{s}' is not a choice"),
                "use auto, on or off",
            )),
        }
    }
}

/// Class indices for the names in `--classes`; an unknown name is an error listing the classes.
pub fn class_indices(names: &[String], ds: &crate::Dataset) -> Result<Vec<u32>> {
    names
        .iter()
        .map(|n| {
            ds.class_index(n).ok_or_else(|| {
                Error::param(
                    "--classes",
                    format!("no class named '{n}'"),
                    format!("the classes are: {}", ds.classes.join(", ")),
                )
            })
        })
        .collect()
}

/// Whether progress bars should be drawn: not with `--quiet`, not when stderr is no terminal.
pub fn show_progress(quiet: bool) -> bool {
    use std::io::IsTerminal;
    !quiet && std::io::stderr().is_terminal()
}

/// The growth plan for a whole dataset: `target` for the classes named in `--classes` (all
/// classes when none are named).
pub fn plan_for(
    ds: &crate::Dataset,
    target: crate::augment::Target,
    classes: Option<&[String]>,
) -> Result<crate::augment::Plan> {
    let only = classes.map(|names| class_indices(names, ds)).transpose()?;
    Ok(crate::augment::Plan::new(
        &ds.class_counts(),
        target,
        only.as_deref(),
    ))
}
