//! The parameters methods share, and the contract each method's own parameters meet.
//!
//! Several methods are assessed side by side with one set of values (one K, one magnitude),
//! so the values a user gives arrive together in [`AugmentParams`]. Each method picks out the
//! ones it reads into its own params struct, which it validates linfa-style: unchecked params
//! → [`ParamGuard::check`] → valid params, and only valid params can be fitted.

use std::fmt;

pub use linfa::ParamGuard;
use serde::Serialize;

use super::{Augmenter, borderline, calibrated, logit_adjust, neighbour_methods, principal_noise};
use crate::error::{Error, Result};
use crate::neighbors::{IndexKind, Metric};

/// A shared parameter a method may read. Its name is the one errors carry
/// (`Error::Param { name, .. }`); the binary maps it to its flag.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Param {
    /// K same-class neighbours.
    Neighbours,
    /// λ of extrapolate, the noise scale of the noise methods.
    Magnitude,
    /// Share of class variance principal directions explain.
    VarianceKept,
    /// Metric of the same-class neighbour search.
    NeighbourMetric,
    /// Exact or approximate same-class neighbour search.
    NeighbourIndex,
    /// Refuse classes the method cannot grow instead of skipping them.
    Strict,
    /// τ of logit-adjust, the scale of the shift by the log class prior.
    Tau,
    /// The path between a row and its partner: the chord, or the great circle on the sphere.
    Path,
    /// k of calibrated: how many well-populated classes lend their mean and covariance.
    BorrowedClasses,
    /// λ of Tukey's ladder of powers in calibrated, or off.
    Tukey,
    /// m of borderline: how many nearest training rows (all classes) judge danger.
    DangerNeighbours,
}

impl Param {
    /// The parameter's library name, as `Error::Param` and the sweep's knob names spell it.
    pub fn name(self) -> &'static str {
        match self {
            Param::Neighbours => "neighbours",
            Param::Magnitude => "magnitude",
            Param::VarianceKept => "variance-kept",
            Param::NeighbourMetric => "neighbour-metric",
            Param::NeighbourIndex => "neighbour-index",
            Param::Strict => "strict",
            Param::Tau => "tau",
            Param::Path => "path",
            Param::BorrowedClasses => "borrowed-classes",
            Param::Tukey => "tukey",
            Param::DangerNeighbours => "danger-neighbours",
        }
    }
}

impl fmt::Display for Param {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// The values of every shared parameter, as a user gave them; each method reads the ones it
/// lists in [`MethodParams::READS`]. The defaults are the methods' own.
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
    /// τ of logit-adjust (default 1, Menon et al. 2021).
    pub tau: f64,
    /// The path interpolate and extrapolate place rows on (default the chord).
    pub path: neighbour_methods::PairPath,
    /// k of calibrated (default 2, Yang et al. 2021).
    pub borrowed_classes: usize,
    /// λ of calibrated's Tukey transform; `None` (the default) leaves features as they are.
    pub tukey: Option<f64>,
    /// m of borderline (default 10, Han et al. 2005).
    pub danger_neighbours: usize,
}

impl Default for AugmentParams {
    fn default() -> Self {
        let nb = neighbour_methods::NeighbourParams::default();
        AugmentParams {
            neighbours: nb.k,
            magnitude: None,
            variance_kept: principal_noise::DEFAULT_VARIANCE_KEPT,
            metric: nb.metric,
            strict: false,
            index: nb.index,
            tau: logit_adjust::DEFAULT_TAU,
            path: neighbour_methods::PairPath::Chord,
            borrowed_classes: calibrated::DEFAULT_BORROWED_CLASSES,
            tukey: None,
            danger_neighbours: borderline::DEFAULT_DANGER_NEIGHBOURS,
        }
    }
}

/// What the registry needs of a method's unchecked parameters.
pub trait MethodParams: ParamGuard<Error = Error> + Sized {
    /// The shared parameters the method reads; a sweep refuses to turn any other, since every
    /// value would give the same rows.
    const READS: &'static [Param];
    /// The magnitude used when none is given, for a method that reads one.
    const DEFAULT_MAGNITUDE: Option<f32> = None;
    /// The unchecked parameters from the shared values.
    fn from_shared(shared: &AugmentParams) -> Self;
}

/// Validated `P` from the shared values, boxed as the augmenter it configures.
pub(super) fn build_with<P>(shared: &AugmentParams) -> Result<Box<dyn Augmenter>>
where
    P: MethodParams,
    P::Checked: Augmenter + 'static,
{
    Ok(Box::new(P::from_shared(shared).check()?))
}

/// The shared check of a magnitude: finite and ≥ 0 (`default` is quoted in the fix).
pub(super) fn check_magnitude(magnitude: f32, default: f32) -> Result<()> {
    if magnitude.is_finite() && magnitude >= 0.0 {
        Ok(())
    } else {
        Err(Error::param(
            Param::Magnitude.name(),
            format!("{magnitude} is not a finite number >= 0"),
            format!("give a finite magnitude, e.g. the default {default}"),
        ))
    }
}
