//! `reweight`: no synthetic rows; the probes weigh the real rows instead. The linear probe
//! weighs a row of class c by `n / (C · n_c)` (the balanced weighting of King & Zeng 2001,
//! scikit-learn's `class_weight="balanced"`), the k-NN vote counts a neighbour of class c as
//! `1 / n_c`. It is here, beside the methods that make rows, because rebalancing the loss is
//! the baseline any augmentation of rare classes has to beat; what it changes lives in the
//! probes (`probe::ClassWeight`, `probe::KnnProbe::predict_balanced`).

use super::none::NoRows;
use super::params::{AugmentParams, MethodParams, Param, ParamGuard};
use super::{Augmenter, FittedAugmenter, MethodKind};
use crate::data::Subset;
use crate::error::{Error, Result};

/// `reweight` has no parameters of its own, so its check always passes.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct ReweightParams(ReweightValidParams);

/// The (empty) parameters of `reweight`.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct ReweightValidParams;

impl ParamGuard for ReweightParams {
    type Checked = ReweightValidParams;
    type Error = Error;

    fn check_ref(&self) -> Result<&ReweightValidParams> {
        Ok(&self.0)
    }

    fn check(self) -> Result<ReweightValidParams> {
        Ok(self.0)
    }
}

impl MethodParams for ReweightParams {
    const READS: &'static [Param] = &[];

    fn from_shared(_shared: &AugmentParams) -> Self {
        ReweightParams::default()
    }
}

impl Augmenter for ReweightValidParams {
    fn kind(&self) -> MethodKind {
        MethodKind::Reweight
    }

    /// No rows: the weights are applied by the probes.
    fn fit(&self, train: &Subset<'_>, _classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        Ok(Box::new(NoRows { dims: train.dims() }))
    }
}
