//! `calibrated`: distribution calibration (Yang, Liu & Xu 2021, "Free lunch for few-shot
//! learning: distribution calibration", ICLR). A class with a handful of rows cannot estimate
//! its own spread, so it borrows one: for each base row x of the grown class, the k classes
//! whose means are nearest to x (among the well-populated ones: the classes not being grown,
//! with at least two rows) lend their means μᵢ and covariances Σᵢ, and synthetic rows are
//! drawn from N(μ′, Σ′) with
//!
//!   μ′ = (Σᵢ μᵢ + x) / (k + 1),   Σ′ = Σᵢ Σᵢ / k + α,
//!
//! α added to every entry of the matrix, as the authors' released code adds the scalar
//! (`np.mean(cov[index], axis=0) + alpha`). Because it needs no neighbour of its own, a
//! one-row class grows with it. With Tukey's ladder of powers (λ, the paper's 0.5) every
//! feature is first mapped to x^λ, the statistics and draws are made there, and each drawn
//! value is mapped back by v^(1/λ) (negative draws to 0), since embloom's probes see rows in
//! the input's own space; the transform is defined for non-negative features only.
//!
//! A draw from N(0, Σᵢ Σᵢ / k) is a sum of independent draws from N(0, Σᵢ / k), and each Σᵢ
//! is held as its principal factor (rows sⱼ·vⱼ, at most min(nᵢ − 1, d) of them), so no d × d
//! matrix is formed or factorised per base row; α's part is one shared N(0, α) offset on
//! every coordinate.

use ndarray::{Array1, Array2};
use rand::Rng as _;
use rand_distr::StandardNormal;
use rayon::prelude::*;

use super::class_fit::{ClassFit, PerClass};
use super::params::{AugmentParams, MethodParams, Param, ParamGuard, check_magnitude};
use super::{Augmenter, FitNote, FittedAugmenter, MethodKind, Provenance, Synthetic, check_finite};
use crate::data::Subset;
use crate::error::{Error, Result};
use crate::pca::Pca;
use crate::seed::Rng;

/// k, the classes borrowed from, when none is given (the paper's k = 2).
pub const DEFAULT_BORROWED_CLASSES: usize = 2;
/// α when none is given: 0.21, the paper's value for miniImageNet (quoted from memory; the
/// paper uses 0.3 for CUB). α is in the features' own squared units.
const DEFAULT_ALPHA: f32 = 0.21;
/// A class lends its statistics only with at least this many training rows (a covariance
/// needs two).
pub const MIN_LENDER_ROWS: usize = 2;

/// Unchecked distribution-calibration parameters; [`ParamGuard::check`] gives the valid ones.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct CalibratedParams(CalibratedValidParams);

/// Distribution-calibration parameters that passed their check: k ≥ 1, a finite α ≥ 0 and,
/// if given, a finite Tukey λ > 0.
#[derive(Debug, Clone, PartialEq)]
pub struct CalibratedValidParams {
    borrowed: usize,
    alpha: f32,
    tukey: Option<f64>,
    strict: bool,
}

impl Default for CalibratedValidParams {
    fn default() -> Self {
        CalibratedValidParams {
            borrowed: DEFAULT_BORROWED_CLASSES,
            alpha: DEFAULT_ALPHA,
            tukey: None,
            strict: false,
        }
    }
}

impl CalibratedParams {
    /// Set k, how many well-populated classes lend their statistics to each base row.
    pub fn borrowed_classes(mut self, k: usize) -> Self {
        self.0.borrowed = k;
        self
    }

    /// Set α, added to every entry of the borrowed covariance (≥ 0).
    pub fn alpha(mut self, alpha: f32) -> Self {
        self.0.alpha = alpha;
        self
    }

    /// Apply Tukey's ladder of powers with this λ (> 0; the paper's 0.5), or not (`None`).
    pub fn tukey(mut self, lambda: Option<f64>) -> Self {
        self.0.tukey = lambda;
        self
    }

    /// Refuse a class that cannot be grown (nothing to borrow from) instead of skipping it.
    pub fn strict(mut self, strict: bool) -> Self {
        self.0.strict = strict;
        self
    }
}

impl ParamGuard for CalibratedParams {
    type Checked = CalibratedValidParams;
    type Error = Error;

    fn check_ref(&self) -> Result<&CalibratedValidParams> {
        if self.0.borrowed == 0 {
            return Err(Error::param(
                Param::BorrowedClasses.name(),
                "k must be at least 1",
                format!("borrow from 1 or more classes (the paper's k is {DEFAULT_BORROWED_CLASSES})"),
            ));
        }
        check_magnitude(self.0.alpha, DEFAULT_ALPHA)?;
        if let Some(l) = self.0.tukey
            && !(l.is_finite() && l > 0.0)
        {
            return Err(Error::param(
                Param::Tukey.name(),
                format!("λ = {l} is not a finite number > 0"),
                "give a positive power, e.g. the paper's 0.5, or leave the transform off",
            ));
        }
        Ok(&self.0)
    }

    fn check(self) -> Result<CalibratedValidParams> {
        self.check_ref()?;
        Ok(self.0)
    }
}

impl MethodParams for CalibratedParams {
    const READS: &'static [Param] = &[
        Param::Magnitude,
        Param::BorrowedClasses,
        Param::Tukey,
        Param::Strict,
    ];
    const DEFAULT_MAGNITUDE: Option<f32> = Some(DEFAULT_ALPHA);

    fn from_shared(shared: &AugmentParams) -> Self {
        CalibratedParams::default()
            .borrowed_classes(shared.borrowed_classes)
            .alpha(shared.magnitude.unwrap_or(DEFAULT_ALPHA))
            .tukey(shared.tukey)
            .strict(shared.strict)
    }
}

/// Peak bytes the statistics of the lending classes take, for the memory estimate: each
/// lender's mean and principal factor (min(nᵢ − 1, d) × d, in f64, in place of its d × d
/// covariance), plus `workers` PCA fits of the largest lender at once.
pub fn lender_bytes(lender_rows: &[usize], dims: usize, workers: usize) -> u64 {
    let d = dims as u64;
    let factors: u64 = lender_rows
        .iter()
        .filter(|&&n| n >= MIN_LENDER_ROWS)
        .map(|&n| ((n as u64 - 1).min(d) + 1) * d * 8)
        .sum();
    let largest = lender_rows.iter().copied().max().unwrap_or(0);
    let fits = (workers.min(lender_rows.len()) as u64).saturating_mul(Pca::fit_peak_bytes(largest, dims));
    factors.saturating_add(fits)
}

/// A lending class's statistics, in the (possibly transformed) feature space.
struct Lender {
    mean: Array1<f64>,
    /// Rows sⱼ·vⱼ: factor F with FᵀF = Σᵢ (n − 1 denominator).
    factor: Array2<f64>,
}

/// One grown class: for each of its rows, the calibrated mean and the lenders it borrows from.
struct ClassCalibration {
    rows: Vec<usize>,
    means: Array2<f64>,
    lenders: Vec<Vec<usize>>,
}

impl CalibratedValidParams {
    /// x^λ, or x itself without the transform.
    fn forward(&self, v: f32) -> f64 {
        match self.tukey {
            Some(l) => f64::from(v).powf(l),
            None => f64::from(v),
        }
    }

    /// Refuse negative features when the transform is on (x^λ is not real for them).
    fn check_tukey(&self, train: &Subset<'_>) -> Result<()> {
        let Some(l) = self.tukey else { return Ok(()) };
        let negative = train.x.iter().enumerate().find_map(|(i, r)| {
            r.iter()
                .position(|&v| v < 0.0)
                .map(|j| (i, j, r[j]))
        });
        match negative {
            None => Ok(()),
            Some((row, col, v)) => Err(Error::param(
                Param::Tukey.name(),
                format!(
                    "Tukey's transform x^{l} needs non-negative features, but training row {row} has {v} in column {col}"
                ),
                "leave the transform off for features that can be negative (it is meant for non-negative activations, e.g. after a ReLU)",
            )),
        }
    }

    /// The transformed rows `rows` of `train`, in f32 for the PCA.
    fn transformed(&self, train: &Subset<'_>, rows: &[usize]) -> Array2<f32> {
        let x = train.x.select(rows);
        match self.tukey {
            Some(_) => x.mapv(|v| self.forward(v) as f32),
            None => x,
        }
    }
}

impl Augmenter for CalibratedValidParams {
    fn kind(&self) -> MethodKind {
        MethodKind::Calibrated
    }

    fn fit(&self, train: &Subset<'_>, classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        self.check_tukey(train)?;
        let grown: std::collections::BTreeSet<u32> = classes.iter().copied().collect();
        let lender_classes: Vec<u32> = (0..train.n_classes() as u32)
            .filter(|c| !grown.contains(c))
            .collect();
        let lender_rows = train.rows_by_class(&lender_classes);
        let lenders: Vec<Lender> = lender_rows
            .into_par_iter()
            .filter(|(_, rows)| rows.len() >= MIN_LENDER_ROWS)
            .map(|(_, rows)| {
                let x = self.transformed(train, &rows);
                let pca = Pca::fit(x.view())?;
                let mut factor = pca.components.clone();
                for (mut v, &var) in factor.rows_mut().into_iter().zip(pca.explained_variance.iter()) {
                    v *= var.max(0.0).sqrt();
                }
                Ok(Lender {
                    mean: pca.mean,
                    factor,
                })
            })
            .collect::<Result<_>>()?;
        let k = self.borrowed.min(lenders.len());
        let fit = |class: u32, rows: &[usize]| -> Result<ClassFit<ClassCalibration>> {
            if k == 0 {
                return Ok(ClassFit::Skip(format!(
                    "no class outside the grown ones has {MIN_LENDER_ROWS} or more training rows to lend its mean and covariance"
                )));
            }
            let notes = (k < self.borrowed)
                .then(|| FitNote::Adjusted {
                    class,
                    detail: format!(
                        "borrowed from {k} classes instead of {} (only {k} classes outside the grown ones have {MIN_LENDER_ROWS} or more rows)",
                        self.borrowed
                    ),
                })
                .into_iter()
                .collect();
            let x = self.transformed(train, rows);
            let d = x.ncols();
            let mut means = Array2::<f64>::zeros((rows.len(), d));
            let mut chosen = Vec::with_capacity(rows.len());
            for (r, mut out) in means.rows_mut().into_iter().enumerate() {
                let xr = x.row(r);
                let mut dist: Vec<(f64, usize)> = lenders
                    .iter()
                    .enumerate()
                    .map(|(i, l)| {
                        let s: f64 = xr
                            .iter()
                            .zip(&l.mean)
                            .map(|(&a, &m)| (f64::from(a) - m).powi(2))
                            .sum();
                        (s, i)
                    })
                    .collect();
                dist.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
                let near: Vec<usize> = dist[..k].iter().map(|&(_, i)| i).collect();
                for (j, o) in out.iter_mut().enumerate() {
                    let s: f64 = near.iter().map(|&i| lenders[i].mean[j]).sum();
                    *o = (s + f64::from(xr[j])) / (k + 1) as f64;
                }
                chosen.push(near);
            }
            Ok(ClassFit::Ready {
                model: ClassCalibration {
                    rows: rows.to_vec(),
                    means,
                    lenders: chosen,
                },
                notes,
            })
        };
        let per_class = PerClass::fit(self.kind(), train, classes, self.strict, fit)?;
        Ok(Box::new(FittedCalibrated {
            per_class,
            lenders,
            params: self.clone(),
        }))
    }
}

struct FittedCalibrated {
    per_class: PerClass<ClassCalibration>,
    lenders: Vec<Lender>,
    params: CalibratedValidParams,
}

impl FittedAugmenter for FittedCalibrated {
    fn sample(&self, class: u32, n: usize, rng: &mut Rng) -> Result<Synthetic> {
        let Some(cc) = self.per_class.get(class)? else {
            return Ok(self.per_class.empty());
        };
        let d = cc.means.ncols();
        let mut x = Array2::<f32>::zeros((n, d));
        let mut provenance = Vec::with_capacity(n);
        let mut value = vec![0.0f64; d];
        let alpha_sd = f64::from(self.params.alpha).sqrt();
        for mut out in x.rows_mut() {
            let base = rng.gen_range(0..cc.rows.len());
            let near = &cc.lenders[base];
            let share = 1.0 / (near.len() as f64).sqrt();
            value
                .iter_mut()
                .zip(cc.means.row(base))
                .for_each(|(v, &m)| *v = m);
            for &i in near {
                for dir in self.lenders[i].factor.rows() {
                    let z: f64 = rng.sample(StandardNormal);
                    let z = z * share;
                    for (v, &f) in value.iter_mut().zip(dir) {
                        *v += z * f;
                    }
                }
            }
            let e: f64 = rng.sample(StandardNormal);
            let e = e * alpha_sd;
            for (o, &v) in out.iter_mut().zip(&value) {
                let v = v + e;
                *o = match self.params.tukey {
                    Some(l) => v.max(0.0).powf(1.0 / l) as f32,
                    None => v as f32,
                };
            }
            provenance.push(Provenance {
                parent: cc.rows[base],
                partner: None,
                weight: self.params.alpha,
            });
        }
        check_finite(MethodKind::Calibrated, class, &x)?;
        Ok(Synthetic { x, provenance })
    }

    fn notes(&self) -> &[FitNote] {
        self.per_class.notes()
    }
}

/// The Tukey setting as text: `off`, or the power λ as a number (checked with the other
/// parameters).
pub fn parse_tukey(s: &str) -> Result<Option<f64>> {
    if s == "off" {
        return Ok(None);
    }
    s.parse::<f64>().map(Some).map_err(|_| {
        Error::param(
            Param::Tukey.name(),
            format!("'{s}' is neither off nor a number"),
            "give off, or the power λ, e.g. the paper's 0.5",
        )
    })
}
