//! `borderline`: Borderline-SMOTE1 (Han, Wang & Mao 2005). Only rows near the class boundary
//! are bases: a row is "in danger" when, of its m nearest training rows over all classes,
//! m' with m/2 ≤ m' < m are of other classes (m' = m marks noise, not a boundary row). A
//! synthetic row is then x + u·(n − x), u ~ U(0,1), with n one of x's K nearest same-class
//! rows, as in interpolate. Growing only the boundary aims the new rows where a probe errs.

use super::cross_class::other_class_counts;
use super::neighbour_methods::{self, Bases, NeighbourParams, PairPath, Segment};
use super::params::{AugmentParams, MethodParams, Param, ParamGuard};
use super::{Augmenter, FitNote, FittedAugmenter, MethodKind};
use crate::data::Subset;
use crate::error::{Error, Result};

/// m, the all-class neighbours that decide danger, when none is given (the paper's m = 10).
pub const DEFAULT_DANGER_NEIGHBOURS: usize = 10;

/// Unchecked Borderline-SMOTE parameters; [`ParamGuard::check`] gives the valid ones.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct BorderlineParams(BorderlineValidParams);

/// Borderline-SMOTE parameters that passed their check: K ≥ 1 and m ≥ 1.
#[derive(Debug, Clone, PartialEq)]
pub struct BorderlineValidParams {
    neighbours: NeighbourParams,
    danger_neighbours: usize,
}

impl Default for BorderlineValidParams {
    fn default() -> Self {
        BorderlineValidParams {
            neighbours: NeighbourParams::default(),
            danger_neighbours: DEFAULT_DANGER_NEIGHBOURS,
        }
    }
}

impl BorderlineParams {
    /// The K nearest same-class rows partners are drawn from (and, for the share or danger
    /// rule, the neighbourhood size where the method uses the same K).
    pub fn neighbours(mut self, neighbours: NeighbourParams) -> Self {
        self.0.neighbours = neighbours;
        self
    }

    /// m: how many nearest training rows (all classes) decide whether a row is in danger.
    pub fn danger_neighbours(mut self, m: usize) -> Self {
        self.0.danger_neighbours = m;
        self
    }
}

impl ParamGuard for BorderlineParams {
    type Checked = BorderlineValidParams;
    type Error = Error;

    fn check_ref(&self) -> Result<&BorderlineValidParams> {
        self.0.neighbours.check()?;
        if self.0.danger_neighbours == 0 {
            return Err(Error::param(
                Param::DangerNeighbours.name(),
                "m must be at least 1",
                format!(
                    "use 1 or more all-class neighbours to judge danger (the paper's m is {DEFAULT_DANGER_NEIGHBOURS})"
                ),
            ));
        }
        Ok(&self.0)
    }

    fn check(self) -> Result<BorderlineValidParams> {
        self.check_ref()?;
        Ok(self.0)
    }
}

impl MethodParams for BorderlineParams {
    const READS: &'static [Param] = &[
        Param::Neighbours,
        Param::NeighbourMetric,
        Param::NeighbourIndex,
        Param::Strict,
        Param::DangerNeighbours,
    ];

    fn from_shared(shared: &AugmentParams) -> Self {
        BorderlineParams::default()
            .neighbours(NeighbourParams::from_shared(shared))
            .danger_neighbours(shared.danger_neighbours)
    }
}

/// Whether a row with `others` of its `m` all-class neighbours in other classes is in danger:
/// m/2 ≤ m' < m (Han et al. 2005, Borderline-SMOTE1 step 3).
pub(super) fn in_danger(others: usize, m: usize) -> bool {
    2 * others >= m && others < m
}

impl Augmenter for BorderlineValidParams {
    fn kind(&self) -> MethodKind {
        MethodKind::Borderline
    }

    fn fit(&self, train: &Subset<'_>, classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        let m = self.danger_neighbours;
        let metric = self.neighbours.metric;
        let bases = |class: u32, rows: &[usize]| -> Result<(Bases, Vec<FitNote>)> {
            let (others, used) = other_class_counts(train, class, rows, m, metric);
            let mut notes = Vec::new();
            if used < m {
                notes.push(FitNote::Adjusted {
                    class,
                    detail: format!(
                        "judged danger by {used} all-class neighbours instead of {m} (the training set has too few rows)"
                    ),
                });
            }
            let danger: Vec<usize> = (0..rows.len())
                .filter(|&i| in_danger(others[i], used))
                .collect();
            if danger.is_empty() {
                notes.push(FitNote::Adjusted {
                    class,
                    detail: format!(
                        "found no row in danger (m/2 ≤ other-class rows < m among its {used} nearest training rows), so every row is a base, as in interpolate"
                    ),
                });
                return Ok((Bases::All, notes));
            }
            Ok((Bases::Among(danger), notes))
        };
        neighbour_methods::fit_with_bases(Segment(MethodKind::Borderline, PairPath::Chord), &self.neighbours, train, classes, bases)
    }
}
