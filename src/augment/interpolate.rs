//! `interpolate`: SMOTE's rule (Chawla et al. 2002). A synthetic row lies on the segment from
//! a real row x to one of its K nearest same-class neighbours n: x + u·(n − x), u ~ U(0,1).
//! It never leaves the convex hull of the class, which is why it is the conservative default.
//! On unit-norm embeddings the segment can follow the sphere instead ([`PairPath::Sphere`]):
//! the row at angle u·θ from x on the great circle towards n (Shoemake 1985).

use super::neighbour_methods::{self, NeighbourParams, PairPath, Segment};
use super::params::{AugmentParams, MethodParams, Param, ParamGuard};
use super::{Augmenter, FittedAugmenter, MethodKind};
use crate::data::Subset;
use crate::error::{Error, Result};

/// Unchecked interpolation parameters; [`ParamGuard::check`] gives the valid ones.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct InterpolateParams(InterpolateValidParams);

/// Interpolation parameters that passed their check: K ≥ 1.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct InterpolateValidParams {
    neighbours: NeighbourParams,
    path: PairPath,
}

impl InterpolateParams {
    /// Set the same-class neighbour search (K, metric, index, strictness).
    pub fn neighbours(mut self, neighbours: NeighbourParams) -> Self {
        self.0.neighbours = neighbours;
        self
    }

    /// Set the path from a row to its partner: the chord (SMOTE) or the great circle.
    pub fn path(mut self, path: PairPath) -> Self {
        self.0.path = path;
        self
    }
}

impl ParamGuard for InterpolateParams {
    type Checked = InterpolateValidParams;
    type Error = Error;

    fn check_ref(&self) -> Result<&InterpolateValidParams> {
        self.0.neighbours.check()?;
        Ok(&self.0)
    }

    fn check(self) -> Result<InterpolateValidParams> {
        self.check_ref()?;
        Ok(self.0)
    }
}

impl MethodParams for InterpolateParams {
    const READS: &'static [Param] = &[
        Param::Neighbours,
        Param::NeighbourMetric,
        Param::NeighbourIndex,
        Param::Strict,
        Param::Path,
    ];

    fn from_shared(shared: &AugmentParams) -> Self {
        InterpolateParams::default()
            .neighbours(NeighbourParams::from_shared(shared))
            .path(shared.path)
    }
}

impl Augmenter for InterpolateValidParams {
    fn kind(&self) -> MethodKind {
        MethodKind::Interpolate
    }

    fn fit(&self, train: &Subset<'_>, classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        let rule = Segment(MethodKind::Interpolate, self.path);
        neighbour_methods::fit(rule, &self.neighbours, train, classes)
    }

    fn check_input(&self, train: &Subset<'_>, unit_norm: bool) -> Result<()> {
        match self.path {
            PairPath::Chord => Ok(()),
            PairPath::Sphere => neighbour_methods::check_sphere_input(self.kind(), train, unit_norm),
        }
    }
}
