//! `adaptive`: ADASYN (He, Bai, Garcia & Li 2008). Every real row of the class is a base, but
//! its share of the class's synthetic rows is proportional to rᵢ = Δᵢ/K, the fraction of other-
//! class rows among its K nearest training rows over all classes: rows that are harder to learn
//! get more synthetic neighbours. Each synthetic row is x + u·(n − x), u ~ U(0,1), with n one
//! of x's K nearest same-class rows, as in interpolate; one K (default 5) serves both, as in
//! the paper. Shares gᵢ = G·rᵢ/Σr become whole counts by the largest-remainder rule (floor,
//! then one more to the largest fractional parts, ties to the earlier row), so they sum exactly
//! to the class's budget G and need no random draw.

use super::cross_class::other_class_counts;
use super::neighbour_methods::{self, Bases, NeighbourParams, PairPath, Segment};
use super::params::{AugmentParams, MethodParams, Param, ParamGuard};
use super::{Augmenter, FitNote, FittedAugmenter, MethodKind};
use crate::data::Subset;
use crate::error::{Error, Result};

/// Unchecked ADASYN parameters; [`ParamGuard::check`] gives the valid ones.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct AdaptiveParams(AdaptiveValidParams);

/// ADASYN parameters that passed their check: K ≥ 1.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct AdaptiveValidParams {
    neighbours: NeighbourParams,
}

impl AdaptiveParams {
    /// The K nearest same-class rows partners are drawn from (and, for the share or danger
    /// rule, the neighbourhood size where the method uses the same K).
    pub fn neighbours(mut self, neighbours: NeighbourParams) -> Self {
        self.0.neighbours = neighbours;
        self
    }
}

impl ParamGuard for AdaptiveParams {
    type Checked = AdaptiveValidParams;
    type Error = Error;

    fn check_ref(&self) -> Result<&AdaptiveValidParams> {
        self.0.neighbours.check()?;
        Ok(&self.0)
    }

    fn check(self) -> Result<AdaptiveValidParams> {
        self.check_ref()?;
        Ok(self.0)
    }
}

impl MethodParams for AdaptiveParams {
    const READS: &'static [Param] = &NeighbourParams::READS;

    fn from_shared(shared: &AugmentParams) -> Self {
        AdaptiveParams::default().neighbours(NeighbourParams::from_shared(shared))
    }
}

impl Augmenter for AdaptiveValidParams {
    fn kind(&self) -> MethodKind {
        MethodKind::Adaptive
    }

    fn fit(&self, train: &Subset<'_>, classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        let k = self.neighbours.k;
        let metric = self.neighbours.metric;
        let bases = |class: u32, rows: &[usize]| -> Result<(Bases, Vec<FitNote>)> {
            let (others, used) = other_class_counts(train, class, rows, k, metric);
            if others.iter().all(|&o| o == 0) {
                let note = FitNote::Adjusted {
                    class,
                    detail: format!(
                        "found no row with another class among its {used} nearest training rows, so every row gets an equal share, as in interpolate"
                    ),
                };
                return Ok((Bases::All, vec![note]));
            }
            // rᵢ = Δᵢ/K; the common 1/K cancels in the shares but is kept to match the paper.
            let r = others.iter().map(|&o| o as f64 / used as f64).collect();
            Ok((Bases::Shares(r), Vec::new()))
        };
        neighbour_methods::fit_with_bases(Segment(MethodKind::Adaptive, PairPath::Chord), &self.neighbours, train, classes, bases)
    }
}
