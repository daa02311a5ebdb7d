//! `extrapolate` (DeVries & Taylor 2017): a synthetic row is pushed from a real row x *away*
//! from one of its K nearest same-class neighbours n: x + λ·(x − n), λ fixed (default 0.5).
//! Unlike interpolation it can reach past the class hull, towards where the class may extend.

use super::class_fit::{ClassFit, PerClass};
use super::class_neighbours::ClassNeighbours;
use super::{
    AugmentParams, Augmenter, FitNote, FittedAugmenter, MethodKind, Provenance, Synthetic,
    check_finite,
};
use crate::data::Dataset;
use crate::error::Result;
use crate::neighbors::{IndexKind, Metric};
use crate::seed::Rng;
use ndarray::Array2;

/// Configured extrapolation.
pub(super) struct Extrapolate {
    k: usize,
    /// λ, validated finite and > 0.
    lambda: f32,
    metric: Metric,
    index: IndexKind,
    strict: bool,
}

impl Extrapolate {
    pub(super) fn new(params: &AugmentParams, lambda: f32) -> Self {
        Extrapolate {
            k: params.neighbours,
            lambda,
            metric: params.metric,
            index: params.index,
            strict: params.strict,
        }
    }
}

impl Augmenter for Extrapolate {
    fn kind(&self) -> MethodKind {
        MethodKind::Extrapolate
    }

    fn fit(&self, train: &Dataset, classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        let fit = |c: u32, rows: &[usize]| -> Result<ClassFit<ClassNeighbours>> {
            ClassNeighbours::fit(train, c, rows, self.k, self.metric, self.index)
        };
        let per_class = PerClass::fit(self.kind(), train, classes, self.strict, fit)?;
        Ok(Box::new(FittedExtrapolate {
            per_class,
            lambda: self.lambda,
        }))
    }
}

struct FittedExtrapolate {
    per_class: PerClass<ClassNeighbours>,
    lambda: f32,
}

impl FittedAugmenter for FittedExtrapolate {
    fn sample(&self, class: u32, n: usize, rng: &mut Rng) -> Result<Synthetic> {
        let Some(nb) = self.per_class.get(class)? else {
            return Ok(self.per_class.empty());
        };
        let mut x = Array2::<f32>::zeros((n, nb.dims()));
        let mut provenance = Vec::with_capacity(n);
        for mut out in x.rows_mut() {
            let pair = nb.draw(rng);
            let l = self.lambda;
            for ((o, &a), &b) in out.iter_mut().zip(pair.x).zip(pair.n) {
                *o = a + l * (a - b);
            }
            provenance.push(Provenance {
                parent: pair.parent,
                partner: Some(pair.partner),
                weight: l,
            });
        }
        check_finite(MethodKind::Extrapolate, class, &x)?;
        Ok(Synthetic { x, provenance })
    }

    fn notes(&self) -> &[FitNote] {
        self.per_class.notes()
    }
}
