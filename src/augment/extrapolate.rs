//! `extrapolate` (DeVries & Taylor 2017): a synthetic row is pushed from a real row x *away*
//! from one of its K nearest same-class neighbours n: x + λ·(x − n), λ fixed (default 0.5).
//! Unlike interpolation it can reach past the class hull, towards where the class may extend.
//! On unit-norm embeddings the push can follow the sphere instead ([`PairPath::Sphere`]): the
//! row at angle λ·θ from x on the great circle through x and n, on the side away from n.

use super::neighbour_methods::{self, NeighbourParams, PairPath, PairRule};
use super::params::{AugmentParams, MethodParams, Param, ParamGuard, check_magnitude};
use super::{Augmenter, FittedAugmenter, MethodKind};
use crate::data::Subset;
use crate::error::{Error, Result};
use crate::seed::Rng;

/// λ when none is given.
const DEFAULT_LAMBDA: f32 = 0.5;

/// Unchecked extrapolation parameters; [`ParamGuard::check`] gives the valid ones.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct ExtrapolateParams(ExtrapolateValidParams);

/// Extrapolation parameters that passed their check: K ≥ 1 and a finite λ > 0.
#[derive(Debug, Clone, PartialEq)]
pub struct ExtrapolateValidParams {
    neighbours: NeighbourParams,
    lambda: f32,
    path: PairPath,
}

impl Default for ExtrapolateValidParams {
    fn default() -> Self {
        ExtrapolateValidParams {
            neighbours: NeighbourParams::default(),
            lambda: DEFAULT_LAMBDA,
            path: PairPath::Chord,
        }
    }
}

impl ExtrapolateParams {
    /// Set the same-class neighbour search (K, metric, index, strictness).
    pub fn neighbours(mut self, neighbours: NeighbourParams) -> Self {
        self.0.neighbours = neighbours;
        self
    }

    /// Set λ, how far past the neighbour the row is pushed, as a multiple of the row-to-neighbour
    /// distance (greater than 0).
    pub fn lambda(mut self, lambda: f32) -> Self {
        self.0.lambda = lambda;
        self
    }

    /// Set the path the row is pushed along: the chord's line or the great circle.
    pub fn path(mut self, path: PairPath) -> Self {
        self.0.path = path;
        self
    }
}

impl ParamGuard for ExtrapolateParams {
    type Checked = ExtrapolateValidParams;
    type Error = Error;

    fn check_ref(&self) -> Result<&ExtrapolateValidParams> {
        self.0.neighbours.check()?;
        check_magnitude(self.0.lambda, DEFAULT_LAMBDA)?;
        if self.0.lambda <= 0.0 {
            return Err(Error::param(
                Param::Magnitude.name(),
                "extrapolate needs λ > 0 (λ = 0 only copies real rows)",
                format!("give a positive λ, e.g. the default {DEFAULT_LAMBDA}"),
            ));
        }
        Ok(&self.0)
    }

    fn check(self) -> Result<ExtrapolateValidParams> {
        self.check_ref()?;
        Ok(self.0)
    }
}

impl MethodParams for ExtrapolateParams {
    const READS: &'static [Param] = &[
        Param::Neighbours,
        Param::Magnitude,
        Param::NeighbourMetric,
        Param::NeighbourIndex,
        Param::Strict,
        Param::Path,
    ];
    const DEFAULT_MAGNITUDE: Option<f32> = Some(DEFAULT_LAMBDA);

    fn from_shared(shared: &AugmentParams) -> Self {
        ExtrapolateParams::default()
            .neighbours(NeighbourParams::from_shared(shared))
            .lambda(shared.magnitude.unwrap_or(DEFAULT_LAMBDA))
            .path(shared.path)
    }
}

/// x + λ·(x − n) with the one fixed λ: the point at t = −λ on the path from x to n.
#[derive(Clone, Copy)]
struct Away {
    lambda: f32,
    path: PairPath,
}

impl PairRule for Away {
    fn kind(&self) -> MethodKind {
        MethodKind::Extrapolate
    }

    fn weight(&self, _rng: &mut Rng) -> f32 {
        self.lambda
    }

    fn position(l: f32) -> f32 {
        -l
    }

    fn path(&self) -> PairPath {
        self.path
    }
}

impl Augmenter for ExtrapolateValidParams {
    fn kind(&self) -> MethodKind {
        MethodKind::Extrapolate
    }

    fn fit(&self, train: &Subset<'_>, classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        let rule = Away {
            lambda: self.lambda,
            path: self.path,
        };
        neighbour_methods::fit(rule, &self.neighbours, train, classes)
    }

    fn check_input(&self, train: &Subset<'_>, unit_norm: bool) -> Result<()> {
        match self.path {
            PairPath::Chord => Ok(()),
            PairPath::Sphere => neighbour_methods::check_sphere_input(self.kind(), train, unit_norm),
        }
    }
}
