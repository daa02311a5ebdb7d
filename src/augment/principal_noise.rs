//! `principal-noise`: Gaussian noise shaped like the class itself. The class's principal
//! directions v_j (enough of them to explain `variance_kept` of its variance) are each scaled
//! by their standard deviation s_j, and a synthetic row is x + magnitude · Σ_j z_j·s_j·v_j with
//! z_j ~ N(0,1) and x a real row drawn uniformly. The offsets therefore have covariance
//! magnitude² · V_k diag(s²) V_kᵀ: the class covariance restricted to its main directions, so
//! the noise moves rows along the class and not across it.

use ndarray::Array2;
use rand::Rng as _;
use rand_distr::StandardNormal;

use super::class_fit::{ClassFit, PerClass};
use super::params::{AugmentParams, MethodParams, Param, ParamGuard, check_magnitude};
use super::{Augmenter, FitNote, FittedAugmenter, MethodKind, Provenance, Synthetic, check_finite};
use crate::data::Subset;
use crate::error::{Error, Result};
use crate::pca::Pca;
use crate::seed::Rng;

/// The noise scale when none is given.
const DEFAULT_MAGNITUDE: f32 = 0.5;
/// The share of class variance kept when none is given.
pub(super) const DEFAULT_VARIANCE_KEPT: f64 = 0.95;

/// Unchecked principal-noise parameters; [`ParamGuard::check`] gives the valid ones.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct PrincipalNoiseParams(PrincipalNoiseValidParams);

/// Principal-noise parameters that passed their check: a finite magnitude ≥ 0 and a kept
/// variance in (0, 1].
#[derive(Debug, Clone, PartialEq)]
pub struct PrincipalNoiseValidParams {
    magnitude: f32,
    variance_kept: f64,
    strict: bool,
}

impl Default for PrincipalNoiseValidParams {
    fn default() -> Self {
        PrincipalNoiseValidParams {
            magnitude: DEFAULT_MAGNITUDE,
            variance_kept: DEFAULT_VARIANCE_KEPT,
            strict: false,
        }
    }
}

impl PrincipalNoiseParams {
    /// Set the noise scale, as a multiple of each principal direction's standard deviation
    /// (greater than 0).
    pub fn magnitude(mut self, magnitude: f32) -> Self {
        self.0.magnitude = magnitude;
        self
    }

    /// Set the share of class variance the principal directions must explain, in (0, 1].
    pub fn variance_kept(mut self, variance_kept: f64) -> Self {
        self.0.variance_kept = variance_kept;
        self
    }

    /// Refuse a class too small to fit principal directions instead of skipping it.
    pub fn strict(mut self, strict: bool) -> Self {
        self.0.strict = strict;
        self
    }
}

impl ParamGuard for PrincipalNoiseParams {
    type Checked = PrincipalNoiseValidParams;
    type Error = Error;

    fn check_ref(&self) -> Result<&PrincipalNoiseValidParams> {
        check_magnitude(self.0.magnitude, DEFAULT_MAGNITUDE)?;
        let v = self.0.variance_kept;
        if !(v > 0.0 && v <= 1.0) {
            return Err(Error::param(
                Param::VarianceKept.name(),
                format!("{v} is not in (0, 1]"),
                format!("give the share of class variance to keep, e.g. {DEFAULT_VARIANCE_KEPT}"),
            ));
        }
        Ok(&self.0)
    }

    fn check(self) -> Result<PrincipalNoiseValidParams> {
        self.check_ref()?;
        Ok(self.0)
    }
}

impl MethodParams for PrincipalNoiseParams {
    const READS: &'static [Param] = &[Param::Magnitude, Param::VarianceKept, Param::Strict];
    const DEFAULT_MAGNITUDE: Option<f32> = Some(DEFAULT_MAGNITUDE);

    fn from_shared(shared: &AugmentParams) -> Self {
        PrincipalNoiseParams::default()
            .magnitude(shared.magnitude.unwrap_or(DEFAULT_MAGNITUDE))
            .variance_kept(shared.variance_kept)
            .strict(shared.strict)
    }
}

impl PrincipalNoiseValidParams {
    fn fit_class(&self, train: &Subset<'_>, rows: &[usize]) -> Result<ClassFit<ClassDirections>> {
        if rows.len() < 2 {
            return Ok(ClassFit::Skip(
                "only one training row, so no principal directions".into(),
            ));
        }
        let x = train.x.select(rows);
        let pca = Pca::fit(x.view())?;
        let k = pca
            .components_for(self.variance_kept)
            .min(pca.components.nrows());
        if k == 0 {
            return Ok(ClassFit::Skip(
                "its rows are identical, so there is no variance to follow".into(),
            ));
        }
        // Row j is magnitude·s_j·v_j, so a draw is just zᵀ·scaled.
        let mut scaled = pca.components.slice(ndarray::s![..k, ..]).to_owned();
        for (mut v, &var) in scaled
            .rows_mut()
            .into_iter()
            .zip(pca.explained_variance.iter())
        {
            v *= var.max(0.0).sqrt() * f64::from(self.magnitude);
        }
        Ok(ClassFit::Ready {
            model: ClassDirections {
                rows: rows.to_vec(),
                x,
                scaled,
            },
            notes: Vec::new(),
        })
    }
}

/// One class's rows and its scaled principal directions.
struct ClassDirections {
    rows: Vec<usize>,
    x: Array2<f32>,
    /// k × d, row j = magnitude·s_j·v_j.
    scaled: Array2<f64>,
}

impl Augmenter for PrincipalNoiseValidParams {
    fn kind(&self) -> MethodKind {
        MethodKind::PrincipalNoise
    }

    fn fit(&self, train: &Subset<'_>, classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        let per_class = PerClass::fit(self.kind(), train, classes, self.strict, |_, rows| {
            self.fit_class(train, rows)
        })?;
        Ok(Box::new(FittedPrincipalNoise {
            per_class,
            magnitude: self.magnitude,
        }))
    }
}

struct FittedPrincipalNoise {
    per_class: PerClass<ClassDirections>,
    magnitude: f32,
}

impl FittedAugmenter for FittedPrincipalNoise {
    fn sample(&self, class: u32, n: usize, rng: &mut Rng) -> Result<Synthetic> {
        let Some(cd) = self.per_class.get(class)? else {
            return Ok(self.per_class.empty());
        };
        let d = cd.x.ncols();
        let mut x = Array2::<f32>::zeros((n, d));
        let mut provenance = Vec::with_capacity(n);
        let mut offset = vec![0.0f64; d];
        for mut out in x.rows_mut() {
            let base = rng.gen_range(0..cd.rows.len());
            offset.iter_mut().for_each(|o| *o = 0.0);
            for dir in cd.scaled.rows() {
                let z: f64 = rng.sample(StandardNormal);
                for (o, &v) in offset.iter_mut().zip(dir) {
                    *o += z * v;
                }
            }
            for ((o, &a), &e) in out.iter_mut().zip(cd.x.row(base)).zip(&offset) {
                *o = (f64::from(a) + e) as f32;
            }
            provenance.push(Provenance {
                parent: cd.rows[base],
                partner: None,
                weight: self.magnitude,
            });
        }
        check_finite(MethodKind::PrincipalNoise, class, &x)?;
        Ok(Synthetic { x, provenance })
    }

    fn notes(&self) -> &[FitNote] {
        self.per_class.notes()
    }
}
