//! Feature-space augmenters. Each method is configured (validated parameters), fitted on the
//! real training rows, then asked for `n` rows of a class with a seeded generator. Every
//! synthetic row carries its provenance.

mod assemble;
mod class_fit;
mod class_neighbours;
mod extrapolate;
mod gaussian_noise;
mod grow;
mod interpolate;
mod none;
mod plan;
mod principal_noise;
mod unit_norm;

pub use assemble::{assemble, grow_dataset};
pub use grow::{Grown, describe_notes, grow};
pub use plan::{Plan, Target, class_indices, plan_for};
pub use unit_norm::UnitNorm;

use std::fmt;
use std::str::FromStr;

use ndarray::Array2;
use serde::Serialize;

use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::neighbors::{IndexKind, Metric};
use crate::seed::Rng;

/// The methods embloom knows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum MethodKind {
    /// No synthetic rows: the baseline.
    None,
    /// SMOTE's rule, x + u·(n − x) (Chawla et al. 2002).
    Interpolate,
    /// x + λ·(x − n) (DeVries & Taylor 2017).
    Extrapolate,
    /// Gaussian noise along the class's principal directions.
    PrincipalNoise,
    /// Isotropic Gaussian noise (baseline).
    GaussianNoise,
}

impl MethodKind {
    pub const ALL: [MethodKind; 5] = [
        MethodKind::None,
        MethodKind::Interpolate,
        MethodKind::Extrapolate,
        MethodKind::PrincipalNoise,
        MethodKind::GaussianNoise,
    ];

    pub fn name(self) -> &'static str {
        match self {
            MethodKind::None => "none",
            MethodKind::Interpolate => "interpolate",
            MethodKind::Extrapolate => "extrapolate",
            MethodKind::PrincipalNoise => "principal-noise",
            MethodKind::GaussianNoise => "gaussian-noise",
        }
    }

    /// Whether the method needs same-class neighbours (so a one-row class cannot grow).
    pub fn uses_neighbours(self) -> bool {
        matches!(self, MethodKind::Interpolate | MethodKind::Extrapolate)
    }

    /// The magnitude used when the user gives none.
    pub fn default_magnitude(self) -> f32 {
        match self {
            MethodKind::None | MethodKind::Interpolate => 0.0,
            MethodKind::Extrapolate | MethodKind::PrincipalNoise => 0.5,
            MethodKind::GaussianNoise => 0.5,
        }
    }
}

impl fmt::Display for MethodKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for MethodKind {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        MethodKind::ALL
            .into_iter()
            .find(|m| m.name() == s)
            .ok_or_else(|| {
                let names: Vec<_> = MethodKind::ALL.iter().map(|m| m.name()).collect();
                Error::param(
                    "method",
                    format!("unknown method '{s}'"),
                    format!("use one of: {}", names.join(", ")),
                )
            })
    }
}

/// Parameters shared by the methods; each method reads the ones it uses.
#[derive(Debug, Clone, Serialize)]
pub struct AugmentParams {
    /// K nearest same-class neighbours for interpolate/extrapolate (default 5).
    pub neighbours: usize,
    /// λ for extrapolate, the noise scale for the noise methods; `None` means the method's default.
    pub magnitude: Option<f32>,
    /// Share of class variance the principal-noise directions must explain (default 0.95).
    pub variance_kept: f64,
    /// Neighbour metric for the neighbour methods (default euclidean, as in SMOTE).
    pub metric: Metric,
    /// Refuse (instead of skipping with a warning) classes a method cannot grow.
    pub strict: bool,
    /// How same-class neighbours are found: exact (default) or the approximate k-d tree,
    /// worth it only for very large classes.
    pub index: IndexKind,
}

impl Default for AugmentParams {
    fn default() -> Self {
        AugmentParams {
            neighbours: 5,
            magnitude: None,
            variance_kept: 0.95,
            metric: Metric::Euclidean,
            strict: false,
            index: IndexKind::Exact,
        }
    }
}

/// Where a synthetic row came from. Indices are rows of the dataset the augmenter was fitted on.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Provenance {
    /// The base real row x.
    pub parent: usize,
    /// The neighbour n used, if any.
    pub partner: Option<usize>,
    /// u (interpolate), λ (extrapolate) or the noise magnitude.
    pub weight: f32,
}

/// Synthetic rows of one class with their provenance, in the same order.
#[derive(Debug, Clone)]
pub struct Synthetic {
    pub x: Array2<f32>,
    pub provenance: Vec<Provenance>,
}

/// Something a fit had to do that the user should hear about.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub enum FitNote {
    /// K was reduced to `k` because the class has too few rows.
    Clamped { class: u32, k: usize },
    /// The class cannot be grown by this method.
    Skipped { class: u32, reason: String },
}

/// A configured method.
pub trait Augmenter: Send + Sync {
    fn kind(&self) -> MethodKind;
    /// Fit on the real rows of `train`, for the classes listed in `classes` only.
    fn fit(&self, train: &Dataset, classes: &[u32]) -> Result<Box<dyn FittedAugmenter>>;
}

/// A method fitted on real training rows.
pub trait FittedAugmenter: Send + Sync {
    /// `n` synthetic rows of class `class`. Classes that were skipped at fit time return zero rows.
    fn sample(&self, class: u32, n: usize, rng: &mut Rng) -> Result<Synthetic>;
    /// What the fit clamped or skipped.
    fn notes(&self) -> &[FitNote];
}

/// A validated augmenter for `kind`.
///
/// Only the parameters the method reads are checked: K for the neighbour methods, the
/// magnitude for extrapolate and the noise methods (extrapolate needs λ > 0, since λ = 0 would
/// only copy rows), and the kept variance for principal-noise.
pub fn build(kind: MethodKind, params: &AugmentParams) -> Result<Box<dyn Augmenter>> {
    if kind.uses_neighbours() && params.neighbours == 0 {
        return Err(Error::param(
            "neighbours",
            "K must be at least 1",
            "use 1 or more same-class neighbours (SMOTE's usual K is 5)",
        ));
    }
    let magnitude = params.magnitude.unwrap_or(kind.default_magnitude());
    let uses_magnitude = matches!(
        kind,
        MethodKind::Extrapolate | MethodKind::PrincipalNoise | MethodKind::GaussianNoise
    );
    if uses_magnitude && !(magnitude.is_finite() && magnitude >= 0.0) {
        return Err(Error::param(
            "magnitude",
            format!("{magnitude} is not a finite number >= 0"),
            format!(
                "give a finite magnitude, e.g. the default {}",
                kind.default_magnitude()
            ),
        ));
    }
    if kind == MethodKind::Extrapolate && magnitude <= 0.0 {
        return Err(Error::param(
            "magnitude",
            "extrapolate needs λ > 0 (λ = 0 only copies real rows)",
            "give a positive λ, e.g. the default 0.5",
        ));
    }
    if kind == MethodKind::PrincipalNoise
        && !(params.variance_kept > 0.0 && params.variance_kept <= 1.0)
    {
        return Err(Error::param(
            "variance-kept",
            format!("{} is not in (0, 1]", params.variance_kept),
            "give the share of class variance to keep, e.g. 0.95",
        ));
    }
    Ok(match kind {
        MethodKind::None => Box::new(none::NoAugment),
        MethodKind::Interpolate => Box::new(interpolate::Interpolate::new(params)),
        MethodKind::Extrapolate => Box::new(extrapolate::Extrapolate::new(params, magnitude)),
        MethodKind::PrincipalNoise => {
            Box::new(principal_noise::PrincipalNoise::new(params, magnitude))
        }
        MethodKind::GaussianNoise => {
            Box::new(gaussian_noise::GaussianNoise::new(params, magnitude))
        }
    })
}

/// Refuse synthetic rows holding NaN or ±Inf (e.g. an overflow from a huge magnitude on large
/// values): they would poison every later stage silently.
fn check_finite(kind: MethodKind, class: u32, x: &Array2<f32>) -> Result<()> {
    match x
        .rows()
        .into_iter()
        .position(|r| r.iter().any(|v| !v.is_finite()))
    {
        None => Ok(()),
        Some(i) => Err(Error::data(
            format!(
                "{kind} produced a non-finite value in synthetic row {i} of class index {class}"
            ),
            "check the input for extreme values, or lower the magnitude",
        )),
    }
}
