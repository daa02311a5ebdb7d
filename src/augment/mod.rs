//! Feature-space augmenters. Each method is configured (validated parameters), fitted on the
//! real training rows, then asked for `n` rows of a class with a seeded generator. Every
//! synthetic row carries its provenance.

mod assemble;
mod class_fit;
mod cross_class;
mod grow;
mod neighbour_methods;
mod params;
mod plan;
mod stream;
mod unit_norm;

pub use assemble::{assemble, assemble_owned, grow_dataset};
pub use calibrated::{lender_bytes, parse_tukey};
pub use grow::{Grown, describe_notes, grow, grow_subset};
pub use mix::partner_bytes;
pub use neighbour_methods::{NeighbourParams, PairPath};
pub use params::{AugmentParams, MethodParams, Param, ParamGuard};
pub use plan::{Plan, Target, class_indices, plan_for};
pub use stream::{
    Batch, Batches, DEFAULT_BATCH_SIZE, Epoch, Schedule, Stream, StreamParams, StreamValidParams,
};
pub use unit_norm::UnitNorm;

use std::fmt;
use std::str::FromStr;

use ndarray::Array2;
use serde::Serialize;

use crate::data::Subset;
use crate::error::{Error, Result};
use crate::seed::Rng;

/// The registry: one line per method, `Variant => module, "name", "help", ParamsType;`. It
/// declares the module (`src/augment/<module>.rs`), re-exports its params types, and gives
/// `MethodKind` its variant, name, help text and constructor; what the method reads and its
/// default magnitude come from its params type (see [`MethodParams`]).
macro_rules! methods {
    ($($variant:ident => $module:ident, $name:literal, $help:literal, $params:ident, $valid:ident;)*) => {
        $(mod $module;)*
        $(pub use $module::{$params, $valid};)*

        /// The methods embloom knows.
        #[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
        pub enum MethodKind {
            $(#[doc = $help] $variant,)*
        }

        impl MethodKind {
            /// Every method, in registry order (the order help text and default sweeps list them).
            pub const ALL: [MethodKind; [$($name),*].len()] = [$(MethodKind::$variant),*];

            /// The method's name as written in results, output files and `origin` columns.
            pub fn name(self) -> &'static str {
                match self { $(MethodKind::$variant => $name,)* }
            }

            /// One line for the user on what the method does.
            pub fn help(self) -> &'static str {
                match self { $(MethodKind::$variant => $help,)* }
            }

            /// The shared parameters the method reads.
            pub fn reads(self) -> &'static [Param] {
                match self { $(MethodKind::$variant => <$params as MethodParams>::READS,)* }
            }

            /// The magnitude the method uses when none is given (0 for a method that reads
            /// none, as results.json records it).
            pub fn default_magnitude(self) -> f32 {
                let m = match self {
                    $(MethodKind::$variant => <$params as MethodParams>::DEFAULT_MAGNITUDE,)*
                };
                m.unwrap_or(0.0)
            }

            fn build(self, shared: &AugmentParams) -> Result<Box<dyn Augmenter>> {
                match self { $(MethodKind::$variant => params::build_with::<$params>(shared),)* }
            }
        }
    };
}

methods! {
    None => none, "none", "no synthetic rows: the baseline", NoneParams, NoneValidParams;
    Interpolate => interpolate, "interpolate", "SMOTE's rule x + u·(n − x) (Chawla et al. 2002)", InterpolateParams, InterpolateValidParams;
    Extrapolate => extrapolate, "extrapolate", "x + λ·(x − n), away from a neighbour (DeVries & Taylor 2017)", ExtrapolateParams, ExtrapolateValidParams;
    PrincipalNoise => principal_noise, "principal-noise", "Gaussian noise along the class's principal directions", PrincipalNoiseParams, PrincipalNoiseValidParams;
    GaussianNoise => gaussian_noise, "gaussian-noise", "isotropic Gaussian noise (baseline)", GaussianNoiseParams, GaussianNoiseValidParams;
    Duplicate => duplicate, "duplicate", "copies of real rows drawn uniformly (random oversampling)", DuplicateParams, DuplicateValidParams;
    Borderline => borderline, "borderline", "Borderline-SMOTE1: SMOTE from rows in danger only (Han et al. 2005)", BorderlineParams, BorderlineValidParams;
    Adaptive => adaptive, "adaptive", "ADASYN: more rows from rows near other classes (He et al. 2008)", AdaptiveParams, AdaptiveValidParams;
    Reweight => reweight, "reweight", "no rows: probes weigh classes by n / (C·n_c) (King & Zeng 2001)", ReweightParams, ReweightValidParams;
    Calibrated => calibrated, "calibrated", "Gaussian draws with statistics borrowed from the nearest populous classes (Yang et al. 2021)", CalibratedParams, CalibratedValidParams;
    Mix => mix, "mix", "mixup with a row of another class, soft labels λ·e(c) + (1 − λ)·e(other) (Zhang et al. 2018)", MixParams, MixValidParams;
    LogitAdjust => logit_adjust, "logit-adjust", "no rows: linear scores shifted by −τ·log prior (Menon et al. 2021)", LogitAdjustParams, LogitAdjustValidParams;
}

impl MethodKind {
    /// Whether the method reads `param`.
    pub fn reads_param(self, param: Param) -> bool {
        self.reads().contains(&param)
    }

    /// Whether the method makes synthetic rows. `none` makes none, and so do the methods that
    /// change how a probe learns instead (`reweight`, `logit-adjust`): grow has nothing to
    /// write for them and the target does not move them.
    pub fn makes_rows(self) -> bool {
        !matches!(
            self,
            MethodKind::None | MethodKind::Reweight | MethodKind::LogitAdjust
        )
    }

    /// Whether the method's rows carry soft labels (a partner class and the share of their own
    /// label, [`crate::data::SoftLabel`]) that the probes train on.
    pub fn soft_labels(self) -> bool {
        self == MethodKind::Mix
    }

    /// Whether the method needs same-class neighbours (so a one-row class cannot grow).
    pub fn uses_neighbours(self) -> bool {
        self.reads_param(Param::Neighbours)
    }
}

impl Serialize for MethodKind {
    fn serialize<S: serde::Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        s.serialize_str(self.name())
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

/// Where a synthetic row came from. Indices are rows of the dataset the augmenter was fitted on.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Provenance {
    /// The base real row x.
    pub parent: usize,
    /// The neighbour n used, if any.
    pub partner: Option<usize>,
    /// u (interpolate), λ (extrapolate), the noise magnitude, or λ of mix (the share of the
    /// row's own label).
    pub weight: f32,
}

/// Synthetic rows of one class with their provenance, in the same order.
#[derive(Debug, Clone)]
pub struct Synthetic {
    /// The rows, one per synthetic sample, in the input's dimension.
    pub x: Array2<f32>,
    /// Where each row came from, aligned with the rows of `x`.
    pub provenance: Vec<Provenance>,
}

/// Something a fit had to do that the user should hear about.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub enum FitNote {
    /// K was reduced to `k` because the class has too few rows.
    Clamped {
        /// The class index, in the training set's class numbering.
        class: u32,
        /// The K actually used: the class's training row count minus one.
        k: usize,
    },
    /// The class cannot be grown by this method.
    Skipped {
        /// The class index, in the training set's class numbering.
        class: u32,
        /// Why, in words for the user (e.g. too few rows to fit the method).
        reason: String,
    },
    /// The class was grown, but the method had to depart from its rule; `detail` says how
    /// (e.g. no row in danger, so every row is a base).
    Adjusted {
        /// The class index, in the training set's class numbering.
        class: u32,
        /// What was changed, in words for the user.
        detail: String,
    },
}

/// A configured method.
pub trait Augmenter: Send + Sync {
    /// The method this configures, for naming its rows and its results.
    fn kind(&self) -> MethodKind;
    /// Fit on the real rows of `train`, for the classes listed in `classes` only.
    fn fit(&self, train: &Subset<'_>, classes: &[u32]) -> Result<Box<dyn FittedAugmenter>>;
    /// Refuse `train` before fitting when the method's rule does not hold for it given whether
    /// synthetic rows will be renormalised (`unit_norm`): the sphere path needs unit-norm rows
    /// or renormalisation. Most methods accept any rows.
    fn check_input(&self, _train: &Subset<'_>, _unit_norm: bool) -> Result<()> {
        Ok(())
    }
}

/// A method fitted on real training rows.
pub trait FittedAugmenter: Send + Sync {
    /// `n` synthetic rows of class `class`. Classes that were skipped at fit time return zero rows.
    fn sample(&self, class: u32, n: usize, rng: &mut Rng) -> Result<Synthetic>;
    /// What the fit clamped or skipped.
    fn notes(&self) -> &[FitNote];
}

/// A validated augmenter for `kind`, configured from the shared values: the method checks
/// only the parameters it reads (see each method's `ParamGuard` impl).
pub fn build(kind: MethodKind, params: &AugmentParams) -> Result<Box<dyn Augmenter>> {
    kind.build(params)
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
