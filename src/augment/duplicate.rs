//! `duplicate`: random oversampling (common practice, no single source). A synthetic row is an
//! exact copy of a real row of its class, drawn uniformly with replacement from the method's
//! seed stream. It adds no new points, only weight, so it is the baseline every method that
//! invents rows has to beat; a one-row class grows like any other.

use ndarray::Array2;
use rand::Rng as _;

use super::class_fit::{ClassFit, PerClass};
use super::params::{AugmentParams, MethodParams, Param, ParamGuard};
use super::{Augmenter, FitNote, FittedAugmenter, MethodKind, Provenance, Synthetic, check_finite};
use crate::data::Subset;
use crate::error::{Error, Result};
use crate::seed::Rng;

/// Random oversampling has no parameters, so its check always passes.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct DuplicateParams(DuplicateValidParams);

/// The (empty) parameters of random oversampling.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct DuplicateValidParams;

impl ParamGuard for DuplicateParams {
    type Checked = DuplicateValidParams;
    type Error = Error;

    fn check_ref(&self) -> Result<&DuplicateValidParams> {
        Ok(&self.0)
    }

    fn check(self) -> Result<DuplicateValidParams> {
        Ok(self.0)
    }
}

impl MethodParams for DuplicateParams {
    const READS: &'static [Param] = &[];

    fn from_shared(_shared: &AugmentParams) -> Self {
        DuplicateParams::default()
    }
}

/// One class's real rows, to copy from.
struct ClassRows {
    rows: Vec<usize>,
    x: Array2<f32>,
}

impl Augmenter for DuplicateValidParams {
    fn kind(&self) -> MethodKind {
        MethodKind::Duplicate
    }

    fn fit(&self, train: &Subset<'_>, classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        let fit = |_: u32, rows: &[usize]| -> Result<ClassFit<ClassRows>> {
            Ok(ClassFit::Ready {
                model: ClassRows {
                    rows: rows.to_vec(),
                    x: train.x.select(rows),
                },
                notes: Vec::new(),
            })
        };
        let per_class = PerClass::fit(self.kind(), train, classes, false, fit)?;
        Ok(Box::new(FittedDuplicate { per_class }))
    }
}

struct FittedDuplicate {
    per_class: PerClass<ClassRows>,
}

impl FittedAugmenter for FittedDuplicate {
    /// `n` copies, each of a row drawn uniformly from the class (with replacement). The parent
    /// is the copied row; there is no partner and the weight is 0 (nothing was moved).
    fn sample(&self, class: u32, n: usize, rng: &mut Rng) -> Result<Synthetic> {
        let Some(cr) = self.per_class.get(class)? else {
            return Ok(self.per_class.empty());
        };
        let mut x = Array2::<f32>::zeros((n, cr.x.ncols()));
        let mut provenance = Vec::with_capacity(n);
        for mut out in x.rows_mut() {
            let base = rng.gen_range(0..cr.rows.len());
            out.assign(&cr.x.row(base));
            provenance.push(Provenance {
                parent: cr.rows[base],
                partner: None,
                weight: 0.0,
            });
        }
        check_finite(MethodKind::Duplicate, class, &x)?;
        Ok(Synthetic { x, provenance })
    }

    fn notes(&self) -> &[FitNote] {
        self.per_class.notes()
    }
}
