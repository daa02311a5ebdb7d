//! `none`: the baseline that adds nothing. It exists as a method so that "no augmentation" goes
//! through exactly the same protocol, probes and report as every real method.

use ndarray::Array2;

use super::params::{AugmentParams, MethodParams, Param, ParamGuard};
use super::{Augmenter, FitNote, FittedAugmenter, MethodKind, Synthetic};
use crate::data::Subset;
use crate::error::{Error, Result};
use crate::seed::Rng;

/// The baseline has no parameters, so its check always passes.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct NoneParams(NoneValidParams);

/// The (empty) parameters of the baseline.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct NoneValidParams;

impl ParamGuard for NoneParams {
    type Checked = NoneValidParams;
    type Error = Error;

    fn check_ref(&self) -> Result<&NoneValidParams> {
        Ok(&self.0)
    }

    fn check(self) -> Result<NoneValidParams> {
        Ok(self.0)
    }
}

impl MethodParams for NoneParams {
    const READS: &'static [Param] = &[];

    fn from_shared(_shared: &AugmentParams) -> Self {
        NoneParams::default()
    }
}

impl Augmenter for NoneValidParams {
    fn kind(&self) -> MethodKind {
        MethodKind::None
    }

    fn fit(&self, train: &Subset<'_>, _classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        Ok(Box::new(NoRows { dims: train.dims() }))
    }
}

/// A fit that makes no rows: the baseline's, and that of the methods which change how a
/// probe learns rather than what it learns from (`reweight`, `logit-adjust`).
pub(super) struct NoRows {
    pub(super) dims: usize,
}

impl FittedAugmenter for NoRows {
    /// Always zero rows, whatever `n` is: the baseline never synthesises.
    fn sample(&self, _class: u32, _n: usize, _rng: &mut Rng) -> Result<Synthetic> {
        Ok(Synthetic {
            x: Array2::zeros((0, self.dims)),
            provenance: Vec::new(),
        })
    }

    fn notes(&self) -> &[FitNote] {
        &[]
    }
}
