//! `none`: the baseline that adds nothing. It exists as a method so that "no augmentation" goes
//! through exactly the same protocol, probes and report as every real method.

use ndarray::Array2;

use super::{Augmenter, FitNote, FittedAugmenter, MethodKind, Synthetic};
use crate::data::Dataset;
use crate::error::Result;
use crate::seed::Rng;

/// The no-op method.
pub(super) struct NoAugment;

impl Augmenter for NoAugment {
    fn kind(&self) -> MethodKind {
        MethodKind::None
    }

    fn fit(&self, train: &Dataset, _classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        Ok(Box::new(FittedNone { dims: train.dims() }))
    }
}

struct FittedNone {
    dims: usize,
}

impl FittedAugmenter for FittedNone {
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
