//! `interpolate`: SMOTE's rule (Chawla et al. 2002). A synthetic row lies on the segment from
//! a real row x to one of its K nearest same-class neighbours n: x + u·(n − x), u ~ U(0,1).
//! It never leaves the convex hull of the class, which is why it is the conservative default.

use ndarray::Array2;
use rand::Rng as _;

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

/// Configured interpolation.
pub(super) struct Interpolate {
    k: usize,
    metric: Metric,
    index: IndexKind,
    strict: bool,
}

impl Interpolate {
    pub(super) fn new(params: &AugmentParams) -> Self {
        Interpolate {
            k: params.neighbours,
            metric: params.metric,
            index: params.index,
            strict: params.strict,
        }
    }
}

impl Augmenter for Interpolate {
    fn kind(&self) -> MethodKind {
        MethodKind::Interpolate
    }

    fn fit(&self, train: &Dataset, classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        let fit = |c: u32, rows: &[usize]| -> Result<ClassFit<ClassNeighbours>> {
            ClassNeighbours::fit(train, c, rows, self.k, self.metric, self.index)
        };
        let per_class = PerClass::fit(self.kind(), train, classes, self.strict, fit)?;
        Ok(Box::new(FittedInterpolate { per_class }))
    }
}

struct FittedInterpolate {
    per_class: PerClass<ClassNeighbours>,
}

impl FittedAugmenter for FittedInterpolate {
    fn sample(&self, class: u32, n: usize, rng: &mut Rng) -> Result<Synthetic> {
        let Some(nb) = self.per_class.get(class)? else {
            return Ok(self.per_class.empty());
        };
        let mut x = Array2::<f32>::zeros((n, nb.dims()));
        let mut provenance = Vec::with_capacity(n);
        for mut out in x.rows_mut() {
            let pair = nb.draw(rng);
            let u: f32 = rng.r#gen();
            for ((o, &a), &b) in out.iter_mut().zip(pair.x).zip(pair.n) {
                *o = a + u * (b - a);
            }
            provenance.push(Provenance {
                parent: pair.parent,
                partner: Some(pair.partner),
                weight: u,
            });
        }
        check_finite(MethodKind::Interpolate, class, &x)?;
        Ok(Synthetic { x, provenance })
    }

    fn notes(&self) -> &[FitNote] {
        self.per_class.notes()
    }
}
