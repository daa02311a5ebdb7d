//! `mix`: mixup across classes (Zhang, Cisse, Dauphin & Lopez-Paz 2018, "mixup: Beyond
//! Empirical Risk Minimization") with soft labels. A synthetic row of grown class c is
//! x = λ·xᵢ + (1 − λ)·xⱼ with xᵢ a real training row of c drawn uniformly, xⱼ a real training
//! row of any other class drawn uniformly over all such rows (so a partner class comes up in
//! proportion to its size), and λ ~ Beta(α, α) folded to max(λ, 1 − λ). Its target is
//! λ·e(c) + (1 − λ)·e(yⱼ).
//!
//! The fold keeps c the row's dominant label, so the method grows class c as every other
//! method does and a consumer that only reads hard labels is never told a row is c when most
//! of it is another class. α is the shared magnitude; its default 0.4 is the top of the range
//! the paper found best on ImageNet (0.1–0.4): most folded λ lie near 1 (mean ≈ 0.84), so
//! rows stay close to the grown class while still reaching towards its rivals.

use ndarray::Array2;
use rand::Rng as _;
use rand_distr::{Beta, Distribution};

use super::class_fit::{ClassFit, PerClass};
use super::params::{AugmentParams, MethodParams, Param, ParamGuard};
use super::{Augmenter, FitNote, FittedAugmenter, MethodKind, Provenance, Synthetic, check_finite};
use crate::data::Subset;
use crate::error::{Error, Result};
use crate::seed::Rng;

/// α of Beta(α, α) when no magnitude is given (see the module notes).
pub const DEFAULT_ALPHA: f32 = 0.4;

/// Bytes a fit holds beyond its input for partners drawn from `rows` training rows of `dims`:
/// its own copy of the rows (f32) and their labels (u32), for the memory estimate checked
/// before any work.
pub fn partner_bytes(rows: usize, dims: usize) -> u64 {
    (rows as u64).saturating_mul((dims as u64).saturating_add(1).saturating_mul(4))
}

/// Unchecked mixup parameters; [`ParamGuard::check`] gives the valid ones.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct MixParams(MixValidParams);

/// Mixup parameters that passed their check: a finite α > 0.
#[derive(Debug, Clone, PartialEq)]
pub struct MixValidParams {
    alpha: f32,
    strict: bool,
}

impl Default for MixValidParams {
    fn default() -> Self {
        MixValidParams {
            alpha: DEFAULT_ALPHA,
            strict: false,
        }
    }
}

impl MixParams {
    /// α of the Beta(α, α) that λ is drawn from (greater than 0).
    pub fn alpha(mut self, alpha: f32) -> Self {
        self.0.alpha = alpha;
        self
    }

    /// Refuse a class with no other class to mix with instead of skipping it.
    pub fn strict(mut self, strict: bool) -> Self {
        self.0.strict = strict;
        self
    }
}

impl ParamGuard for MixParams {
    type Checked = MixValidParams;
    type Error = Error;

    fn check_ref(&self) -> Result<&MixValidParams> {
        let a = self.0.alpha;
        if !(a.is_finite() && a > 0.0) {
            return Err(Error::param(
                Param::Magnitude.name(),
                format!("mix reads the magnitude as α of Beta(α, α), which must be a finite number > 0, got {a}"),
                format!("give a magnitude above 0, e.g. the default {DEFAULT_ALPHA}"),
            ));
        }
        Ok(&self.0)
    }

    fn check(self) -> Result<MixValidParams> {
        self.check_ref()?;
        Ok(self.0)
    }
}

impl MethodParams for MixParams {
    const READS: &'static [Param] = &[Param::Magnitude, Param::Strict];
    const DEFAULT_MAGNITUDE: Option<f32> = Some(DEFAULT_ALPHA);

    fn from_shared(shared: &AugmentParams) -> Self {
        MixParams::default()
            .alpha(shared.magnitude.unwrap_or(DEFAULT_ALPHA))
            .strict(shared.strict)
    }
}

impl Augmenter for MixValidParams {
    fn kind(&self) -> MethodKind {
        MethodKind::Mix
    }

    fn fit(&self, train: &Subset<'_>, classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        let n = train.n_rows();
        let fit = |_: u32, rows: &[usize]| -> Result<ClassFit<Vec<usize>>> {
            if rows.len() == n {
                return Ok(ClassFit::Skip(
                    "no training row of another class to mix with".into(),
                ));
            }
            Ok(ClassFit::Ready {
                model: rows.to_vec(),
                notes: Vec::new(),
            })
        };
        let per_class = PerClass::fit(self.kind(), train, classes, self.strict, fit)?;
        let beta = Beta::new(f64::from(self.alpha), f64::from(self.alpha)).map_err(|e| {
            Error::param(
                Param::Magnitude.name(),
                format!("Beta({0}, {0}) cannot be drawn from: {e}", self.alpha),
                format!("give a magnitude above 0, e.g. the default {DEFAULT_ALPHA}"),
            )
        })?;
        // Partners may be any training row, so the fitted method keeps the training rows.
        Ok(Box::new(FittedMix {
            per_class,
            x: train.x.to_owned(),
            labels: train.labels.to_vec(),
            beta,
        }))
    }
}

struct FittedMix {
    /// Each fitted class's training rows (bases).
    per_class: PerClass<Vec<usize>>,
    /// All training rows (partners).
    x: Array2<f32>,
    labels: Vec<u32>,
    beta: Beta<f64>,
}

/// λ drawn from `beta`, folded to the upper half: max(λ, 1 − λ).
fn folded(beta: &Beta<f64>, rng: &mut Rng) -> f64 {
    let l = beta.sample(rng);
    l.max(1.0 - l)
}

impl FittedAugmenter for FittedMix {
    /// `n` rows λ·xᵢ + (1 − λ)·xⱼ. The partner is drawn uniformly over the training rows by
    /// rejection (redrawn while it is of the grown class), which needs on average
    /// n / (n − n_c) draws; the fit skipped classes with no other row. Provenance: parent i,
    /// partner j, weight λ.
    fn sample(&self, class: u32, n: usize, rng: &mut Rng) -> Result<Synthetic> {
        let Some(rows) = self.per_class.get(class)? else {
            return Ok(self.per_class.empty());
        };
        let mut x = Array2::<f32>::zeros((n, self.x.ncols()));
        let mut provenance = Vec::with_capacity(n);
        let total = self.labels.len();
        for mut out in x.rows_mut() {
            let i = rows[rng.gen_range(0..rows.len())];
            let j = loop {
                let j = rng.gen_range(0..total);
                if self.labels[j] != class {
                    break j;
                }
            };
            let l = folded(&self.beta, rng);
            let (xi, xj) = (self.x.row(i), self.x.row(j));
            out.iter_mut()
                .zip(xi.iter().zip(xj))
                .for_each(|(o, (&a, &b))| {
                    *o = (l * f64::from(a) + (1.0 - l) * f64::from(b)) as f32
                });
            provenance.push(Provenance {
                parent: i,
                partner: Some(j),
                weight: l as f32,
            });
        }
        check_finite(MethodKind::Mix, class, &x)?;
        Ok(Synthetic { x, provenance })
    }

    fn notes(&self) -> &[FitNote] {
        self.per_class.notes()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::seed;

    #[test]
    fn folded_mean_matches_the_beta_density() {
        // Derived from the Beta(α, α) density: with t = 2λ − 1,
        // E|λ − ½| = 4^(−α) / (α·B(α, α)), so E[max(λ, 1 − λ)] = ½ + 4^(−α) / (α·B(α, α)):
        // 0.75 at α = 1 (B = 1, the uniform) and ½ + 1/π at α = ½ (B(½, ½) = π).
        for (alpha, want) in [(1.0, 0.75), (0.5, 0.5 + 1.0 / std::f64::consts::PI)] {
            let beta = Beta::new(alpha, alpha).unwrap();
            let mut rng = seed::stream(7, &[1]);
            let n = 200_000;
            let draws: Vec<f64> = (0..n).map(|_| folded(&beta, &mut rng)).collect();
            assert!(draws.iter().all(|&l| (0.5..=1.0).contains(&l)));
            let mean = draws.iter().sum::<f64>() / n as f64;
            // The folded λ lies in [½, 1], so its standard deviation is below ¼ and the mean's
            // below 0.25 / √n ≈ 5.6e-4: 4e-3 is over 7 of them.
            assert!((mean - want).abs() < 4e-3, "α = {alpha}: mean {mean} vs {want}");
        }
    }

    #[test]
    fn alpha_must_be_positive() {
        // Beta(α, α) is defined for α > 0 only (the paper's definition of the mixing draw).
        for bad in [0.0, -1.0, f32::NAN, f32::INFINITY] {
            assert!(MixParams::default().alpha(bad).check().is_err());
        }
        assert!(MixParams::default().alpha(0.2).check().is_ok());
    }
}
