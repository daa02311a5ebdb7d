//! `gaussian-noise`: the isotropic baseline. A synthetic row is x + magnitude·σ·z with
//! z ~ N(0, I) and x a real row drawn uniformly; σ is the class's typical spread, the mean over
//! dimensions of its per-dimension standard deviation (n − 1 denominator). Scaling by σ makes
//! one magnitude mean the same thing for classes and embeddings of any scale, and comparing
//! against this baseline shows whether following the class's shape matters.

use ndarray::{Array2, Axis};
use rand::Rng as _;
use rand_distr::StandardNormal;

use super::class_fit::{ClassFit, PerClass};
use super::params::{AugmentParams, MethodParams, Param, ParamGuard, check_magnitude};
use super::{Augmenter, FitNote, FittedAugmenter, MethodKind, Provenance, Synthetic, check_finite};
use crate::data::Subset;
use crate::error::{Error, Result};
use crate::seed::Rng;

/// The noise scale, in class spreads, when none is given.
const DEFAULT_MAGNITUDE: f32 = 0.5;

/// Unchecked isotropic-noise parameters; [`ParamGuard::check`] gives the valid ones.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct GaussianNoiseParams(GaussianNoiseValidParams);

/// Isotropic-noise parameters that passed their check: a finite magnitude ≥ 0.
#[derive(Debug, Clone, PartialEq)]
pub struct GaussianNoiseValidParams {
    magnitude: f32,
    strict: bool,
}

impl Default for GaussianNoiseValidParams {
    fn default() -> Self {
        GaussianNoiseValidParams {
            magnitude: DEFAULT_MAGNITUDE,
            strict: false,
        }
    }
}

impl GaussianNoiseParams {
    /// Set the noise scale, as a multiple of each dimension's class standard deviation
    /// (greater than 0).
    pub fn magnitude(mut self, magnitude: f32) -> Self {
        self.0.magnitude = magnitude;
        self
    }

    /// Refuse a class too small to estimate its spread instead of skipping it.
    pub fn strict(mut self, strict: bool) -> Self {
        self.0.strict = strict;
        self
    }
}

impl ParamGuard for GaussianNoiseParams {
    type Checked = GaussianNoiseValidParams;
    type Error = Error;

    fn check_ref(&self) -> Result<&GaussianNoiseValidParams> {
        check_magnitude(self.0.magnitude, DEFAULT_MAGNITUDE)?;
        Ok(&self.0)
    }

    fn check(self) -> Result<GaussianNoiseValidParams> {
        self.check_ref()?;
        Ok(self.0)
    }
}

impl MethodParams for GaussianNoiseParams {
    const READS: &'static [Param] = &[Param::Magnitude, Param::Strict];
    const DEFAULT_MAGNITUDE: Option<f32> = Some(DEFAULT_MAGNITUDE);

    fn from_shared(shared: &AugmentParams) -> Self {
        GaussianNoiseParams::default()
            .magnitude(shared.magnitude.unwrap_or(DEFAULT_MAGNITUDE))
            .strict(shared.strict)
    }
}

/// One class's rows and the noise scale magnitude·σ.
struct ClassSpread {
    rows: Vec<usize>,
    x: Array2<f32>,
    scale: f64,
}

/// Mean over dimensions of the per-dimension sample standard deviation (n − 1), in f64.
fn mean_sd(x: &Array2<f32>) -> f64 {
    let n = x.nrows() as f64;
    let sds = x.axis_iter(Axis(1)).map(|col| {
        let mean = col.iter().map(|&v| f64::from(v)).sum::<f64>() / n;
        let ss = col
            .iter()
            .map(|&v| (f64::from(v) - mean).powi(2))
            .sum::<f64>();
        (ss / (n - 1.0)).sqrt()
    });
    sds.sum::<f64>() / x.ncols().max(1) as f64
}

impl Augmenter for GaussianNoiseValidParams {
    fn kind(&self) -> MethodKind {
        MethodKind::GaussianNoise
    }

    fn fit(&self, train: &Subset<'_>, classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        let fit = |_: u32, rows: &[usize]| -> Result<ClassFit<ClassSpread>> {
            if rows.len() < 2 {
                return Ok(ClassFit::Skip(
                    "only one training row, so its spread is undefined".into(),
                ));
            }
            let x = train.x.select(rows);
            let sigma = mean_sd(&x);
            if sigma == 0.0 {
                return Ok(ClassFit::Skip(
                    "its rows are identical, so its spread is zero".into(),
                ));
            }
            let scale = f64::from(self.magnitude) * sigma;
            Ok(ClassFit::Ready {
                model: ClassSpread {
                    rows: rows.to_vec(),
                    x,
                    scale,
                },
                notes: Vec::new(),
            })
        };
        let per_class = PerClass::fit(self.kind(), train, classes, self.strict, fit)?;
        Ok(Box::new(FittedGaussianNoise {
            per_class,
            magnitude: self.magnitude,
        }))
    }
}

struct FittedGaussianNoise {
    per_class: PerClass<ClassSpread>,
    magnitude: f32,
}

impl FittedAugmenter for FittedGaussianNoise {
    fn sample(&self, class: u32, n: usize, rng: &mut Rng) -> Result<Synthetic> {
        let Some(cs) = self.per_class.get(class)? else {
            return Ok(self.per_class.empty());
        };
        let mut x = Array2::<f32>::zeros((n, cs.x.ncols()));
        let mut provenance = Vec::with_capacity(n);
        for mut out in x.rows_mut() {
            let base = rng.gen_range(0..cs.rows.len());
            for (o, &a) in out.iter_mut().zip(cs.x.row(base)) {
                let z: f64 = rng.sample(StandardNormal);
                *o = (f64::from(a) + cs.scale * z) as f32;
            }
            provenance.push(Provenance {
                parent: cs.rows[base],
                partner: None,
                weight: self.magnitude,
            });
        }
        check_finite(MethodKind::GaussianNoise, class, &x)?;
        Ok(Synthetic { x, provenance })
    }

    fn notes(&self) -> &[FitNote] {
        self.per_class.notes()
    }
}
