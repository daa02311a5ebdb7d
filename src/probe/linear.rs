//! The linear probe: multinomial logistic regression with an L2 penalty, fitted by L-BFGS.

use ndarray::{Array1, Array2, ArrayView2};
use serde::{Deserialize, Serialize};

use super::feature_preconditioner::FeaturePreconditioner;
use super::lbfgs;
use super::linear_model::LinearModel;
use super::scaling;
use super::softmax_loss::{Precision, SoftmaxLoss};
use crate::data::{Rows, SoftLabel};
use crate::error::{Error, Result};

/// The f32 phase of a fit stops at this multiple of the gradient tolerance (or at its first
/// failed line search); the stepped phase (f64 logits moved by f32 products of each step, see
/// softmax_loss.rs) takes it the rest of the way with values accurate enough for the line
/// search, and only a tolerance near the stepped gradient's rounding needs a last phase in
/// f64 throughout. At 1 the f32 phase does nearly all the work: its gradient is summed block
/// by block in f64 and is accurate well below the default tolerance. Measured in
/// tests/bench/linear_compare.sh: a factor of 100 left 43 of 58 evaluations to f64 on the
/// benchmark set (each then cost about two f32 ones).
const FAST_PHASE_TOL_FACTOR: f64 = 1.0;

/// The phases after the f32 one run on until the largest gradient component is at most this
/// multiple of the gradient tolerance. The fit is reported converged by the user's rule
/// (largest component ≤ `tol`); stopping a little past it costs a few iterations and reaches
/// a final objective at or below scikit-learn's lbfgs at the same `tol`, which otherwise
/// stops where its own path happens to cross `tol`, often slightly lower than ours.
const EXACT_PHASE_TOL_FACTOR: f64 = 0.5;

/// How training rows are weighted in the loss.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum ClassWeight {
    /// Every row weighs 1.
    None,
    /// A row of class c weighs `n / (C · n_c)` (scikit-learn's `compute_class_weight
    /// ("balanced")`, C = classes present), so every present class carries the same total
    /// weight — augmentation then has to beat a probe that already rebalances.
    Balanced,
}

/// Settings of the linear probe.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct LinearParams {
    /// λ in `Σᵢ wᵢ ℓᵢ / n + λ/2 ‖W‖²` (biases are not penalised).
    pub l2: f64,
    /// Centre and scale each column by its training mean and standard deviation first.
    pub standardize: bool,
    /// Row weighting.
    pub class_weight: ClassWeight,
    /// Stop when the largest absolute gradient component is at most this.
    pub tol: f64,
    /// L-BFGS iteration budget.
    pub max_iter: usize,
}

impl Default for LinearParams {
    fn default() -> Self {
        LinearParams {
            l2: 1e-4,
            standardize: true,
            class_weight: ClassWeight::None,
            tol: 1e-6,
            max_iter: 500,
        }
    }
}

impl LinearParams {
    /// Checks the ranges; the probe can only be built from parameters that pass.
    pub fn validate(&self) -> Result<()> {
        if !(self.l2.is_finite() && self.l2 >= 0.0) {
            return Err(Error::param(
                "l2",
                format!(
                    "the L2 penalty must be a finite number ≥ 0, got {}",
                    self.l2
                ),
                "set l2 to 0 or more (1e-4 is the default)",
            ));
        }
        if !(self.tol.is_finite() && self.tol > 0.0) {
            return Err(Error::param(
                "tol",
                format!(
                    "the gradient tolerance must be a positive finite number, got {}",
                    self.tol
                ),
                "set tol above 0 (1e-6 is the default)",
            ));
        }
        if self.max_iter == 0 {
            return Err(Error::param(
                "max_iter",
                "the optimiser needs at least one iteration (max_iter = 0)",
                "set max_iter to 1 or more (500 is the default)",
            ));
        }
        Ok(())
    }
}

/// Per-class row weights for `y` (labels below `n_classes`): all 1 for [`ClassWeight::None`];
/// `n / (C · n_c)` for [`ClassWeight::Balanced`], with C the number of classes present and
/// 0 for absent classes (they have no rows to weigh).
pub fn class_weights(y: &[u32], n_classes: usize, mode: ClassWeight) -> Vec<f64> {
    match mode {
        ClassWeight::None => vec![1.0; n_classes],
        ClassWeight::Balanced => {
            let mut counts = vec![0usize; n_classes];
            for &c in y {
                if let Some(n) = counts.get_mut(c as usize) {
                    *n += 1;
                }
            }
            let present = counts.iter().filter(|&&n| n > 0).count() as f64;
            let n = y.len() as f64;
            counts
                .iter()
                .map(|&nc| {
                    if nc > 0 {
                        n / (present * nc as f64)
                    } else {
                        0.0
                    }
                })
                .collect()
        }
    }
}

/// A multinomial logistic regression with validated settings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LinearProbe {
    params: LinearParams,
}

impl LinearProbe {
    /// Peak bytes a fit on `rows` training rows of `dims` adds, for the memory estimate
    /// checked before any work. Counted as one f32 copy of the training rows: the parts are
    /// read in place and standardised block by block, so this bounds the per-row weights and
    /// labels, the blocks in flight and the test probabilities (checked against the measured
    /// peak in tests/cli/hardening_memory.rs).
    pub fn fit_peak_bytes(rows: usize, dims: usize) -> u64 {
        (rows as u64).saturating_mul(dims as u64).saturating_mul(4)
    }
}

impl LinearProbe {
    /// A probe from parameters that pass [`LinearParams::validate`].
    pub fn new(params: LinearParams) -> Result<Self> {
        params.validate()?;
        Ok(LinearProbe { params })
    }

    /// The validated parameters.
    pub fn params(&self) -> &LinearParams {
        &self.params
    }

    /// Fits on rows `x` with class indices `y` (each below `n_classes`).
    ///
    /// `init` warm-starts from another fit with the same shapes: its decision function is
    /// carried over exactly, even when this fit's standardisation differs (the weights are
    /// re-expressed in the new coordinates), so a fit on a slightly changed training set starts
    /// close to its optimum. Classes without rows get no special handling: nothing pulls their
    /// scores up, so they end with low probability. Non-convergence is not an error; it is
    /// reported in [`LinearModel::converged`].
    pub fn fit(
        &self,
        x: ArrayView2<f32>,
        y: &[u32],
        n_classes: usize,
        init: Option<&LinearModel>,
    ) -> Result<LinearModel> {
        self.fit_parts(&[x], y, n_classes, init)
    }

    /// [`LinearProbe::fit`] on the rows of `parts` taken in order (e.g. real training rows,
    /// then synthetic rows), with `y` labelling them in that order. Gives the same model as
    /// fitting the stacked rows, without making the stacked copy.
    pub fn fit_parts(
        &self,
        parts: &[ArrayView2<f32>],
        y: &[u32],
        n_classes: usize,
        init: Option<&LinearModel>,
    ) -> Result<LinearModel> {
        self.fit_parts_soft(parts, y, &[], n_classes, init)
    }

    /// [`LinearProbe::fit_parts`] where the rows with a soft part in `soft` (aligned with `y`,
    /// or empty for none) train on the cross-entropy against their soft target
    /// `weight·e(yᵢ) + (1 − weight)·e(partner)`. Class weights still follow `y`, each row's
    /// dominant label.
    pub fn fit_parts_soft(
        &self,
        parts: &[ArrayView2<f32>],
        y: &[u32],
        soft: &[Option<SoftLabel>],
        n_classes: usize,
        init: Option<&LinearModel>,
    ) -> Result<LinearModel> {
        let parts: Vec<Rows<'_>> = parts.iter().map(|&p| p.into()).collect();
        self.fit_rows_soft(&parts, y, soft, n_classes, init)
    }

    /// [`LinearProbe::fit_parts_soft`] on parts that may be picked rows of a larger matrix
    /// (a fold's training rows inside the input): they are read where they are, a block at a
    /// time, and the model equals a fit on the same rows copied out.
    pub fn fit_rows_soft(
        &self,
        parts: &[Rows<'_>],
        y: &[u32],
        soft: &[Option<SoftLabel>],
        n_classes: usize,
        init: Option<&LinearModel>,
    ) -> Result<LinearModel> {
        let Some(first) = parts.first() else {
            return Err(Error::data(
                "the linear probe got no training rows",
                "check that every fold keeps training rows (use fewer folds or more data)",
            ));
        };
        let d = first.ncols();
        if let Some(p) = parts.iter().find(|p| p.ncols() != d) {
            return Err(Error::data(
                format!(
                    "the linear probe got row blocks of {d} and {} columns",
                    p.ncols()
                ),
                "pass row blocks of one embedding width",
            ));
        }
        check_inputs(parts, y, n_classes)?;
        check_soft(soft, y.len(), n_classes)?;
        let c = n_classes;
        let (mean, scale) = scaling::fit_parts(parts, self.params.standardize);
        let weights = class_weights(y, n_classes, self.params.class_weight);
        let loss = SoftmaxLoss::new(
            parts,
            mean.view(),
            scale.view(),
            y,
            &weights,
            n_classes,
            self.params.l2,
        )
        .with_soft(soft);
        let theta0 = match init {
            Some(m) => warm_start(m, &mean, &scale, c, d)?,
            None => vec![0.0; loss.n_params()],
        };
        // The rows' second moments precondition L-BFGS (an exact change of variables, see
        // feature_preconditioner.rs): most of the iterations the fit needed went into learning
        // the columns' correlations.
        let precond =
            FeaturePreconditioner::new(parts, mean.view(), scale.view(), self.params.l2, n_classes);
        let apply = |v: &[f64], out: &mut [f64]| match &precond {
            Some(p) => p.apply(v, out),
            None => out.copy_from_slice(v),
        };
        let minimise = |f: &mut dyn FnMut(&[f64], &mut [f64]) -> f64,
                        x0: Vec<f64>,
                        memory: lbfgs::Memory,
                        opts: &lbfgs::Options| {
            if precond.is_some() {
                lbfgs::minimize_preconditioned(f, x0, memory, &apply, opts)
            } else {
                lbfgs::minimize_from(f, x0, memory, opts)
            }
        };
        // Most iterations run on f32 matrix products; once their rounding stops the line
        // search (or the tolerance is met in f32), the fit finishes in f64 from there, so the
        // stopping rule is checked on the exact gradient.
        let mut evaluations = 0usize;
        let mut eval = |t: &[f64], g: &mut [f64], p: Precision| {
            evaluations += 1;
            loss.evaluate(t, g, p)
        };
        let tol = self.params.tol;
        let max_iter = self.params.max_iter;
        let mut phase = |precision: Precision,
                         x0: Vec<f64>,
                         memory: lbfgs::Memory,
                         tol_factor: f64,
                         used: usize,
                         stop_on_failed_search: bool| {
            minimise(
                &mut |t, g| eval(t, g, precision),
                x0,
                memory,
                &lbfgs::Options {
                    memory: 10,
                    tol: tol_factor * tol,
                    max_iter: max_iter - used,
                    stop_on_failed_search,
                },
            )
        };
        let fast = phase(
            Precision::Fast,
            theta0,
            lbfgs::Memory::default(),
            FAST_PHASE_TOL_FACTOR,
            0,
            true,
        );
        // The f32 phase's correction pairs carry over: its gradients are close to the exact
        // ones, so the phases after it continue with their curvature instead of restarting.
        // The stepped phase's first evaluation computes the logits in f64, so the stopping
        // rule is never judged on f32 logits.
        let mut out = phase(
            Precision::Stepped,
            fast.x,
            fast.memory,
            EXACT_PHASE_TOL_FACTOR,
            fast.iterations,
            true,
        );
        out.iterations += fast.iterations;
        let mut exact_evaluations = out.evaluations;
        if out.grad_max > EXACT_PHASE_TOL_FACTOR * tol && out.iterations < max_iter {
            // A tolerance near the rounding of the stepped gradient's f32 products (a fit to
            // 1e-8 in this file's tests needs it): finish in f64 throughout.
            let used = out.iterations;
            let rest = phase(
                Precision::Exact,
                out.x,
                out.memory,
                EXACT_PHASE_TOL_FACTOR,
                used,
                false,
            );
            exact_evaluations += rest.evaluations;
            out = lbfgs::Outcome {
                iterations: used + rest.iterations,
                ..rest
            };
        }
        out.converged = out.grad_max <= tol;
        drop(loss);
        let (w, b) = out.x.split_at(c * d);
        Ok(LinearModel {
            weights: Array2::from_shape_vec((c, d), w.to_vec()).expect("C × d parameters"),
            bias: Array1::from(b.to_vec()),
            mean,
            scale,
            converged: out.converged,
            iterations: out.iterations,
            evaluations,
            exact_evaluations,
            final_loss: out.value,
        })
    }
}

/// Rejects inputs the loss cannot be evaluated on.
fn check_inputs(parts: &[Rows<'_>], y: &[u32], n_classes: usize) -> Result<()> {
    let rows: usize = parts.iter().map(|p| p.nrows()).sum();
    if rows != y.len() {
        return Err(Error::data(
            format!("the linear probe got {} rows but {} labels", rows, y.len()),
            "pass one class index per training row",
        ));
    }
    if rows == 0 {
        return Err(Error::data(
            "the linear probe got no training rows",
            "check that every fold keeps training rows (use fewer folds or more data)",
        ));
    }
    if let Some(&bad) = y.iter().find(|&&c| c as usize >= n_classes) {
        return Err(Error::data(
            format!("class index {bad} is not below the number of classes ({n_classes})"),
            "pass class indices from the dataset's label encoding",
        ));
    }
    if let Some((i, _)) = parts
        .iter()
        .flat_map(|p| p.iter())
        .enumerate()
        .find(|(_, r)| r.iter().any(|v| !v.is_finite()))
    {
        return Err(Error::data(
            format!("training row {i} has a NaN or infinite value"),
            "drop or repair non-finite rows before fitting the linear probe",
        ));
    }
    Ok(())
}

/// Rejects soft parts the loss cannot use: not one per row, a partner class out of range, or
/// a share outside [0, 1].
fn check_soft(soft: &[Option<SoftLabel>], rows: usize, n_classes: usize) -> Result<()> {
    if soft.is_empty() {
        return Ok(());
    }
    if soft.len() != rows {
        return Err(Error::data(
            format!(
                "the linear probe got {} soft labels for {rows} rows",
                soft.len()
            ),
            "pass one soft part (or none) per training row",
        ));
    }
    for (i, s) in soft.iter().enumerate() {
        let Some(s) = s else { continue };
        if s.partner as usize >= n_classes || !(0.0..=1.0).contains(&s.weight) {
            return Err(Error::data(
                format!(
                    "training row {i} has a soft label of class index {} with weight {}",
                    s.partner, s.weight
                ),
                "give partner classes below the number of classes and weights in [0, 1]",
            ));
        }
    }
    Ok(())
}

/// `init`'s parameters re-expressed for this fit's column transform, packed `[W, b]`.
///
/// `W₀ (x − m₀)/s₀ + b₀ = (W₀ s/s₀) (x − m)/s + b₀ + W₀ (m − m₀)/s₀`, column by column.
fn warm_start(
    init: &LinearModel,
    mean: &Array1<f64>,
    scale: &Array1<f64>,
    c: usize,
    d: usize,
) -> Result<Vec<f64>> {
    if init.n_classes() != c || init.dims() != d {
        return Err(Error::param(
            "init",
            format!(
                "the warm-start model is {} classes × {} dims but this fit is {c} × {d}",
                init.n_classes(),
                init.dims()
            ),
            "warm-start only from a linear probe fitted on the same classes and columns",
        ));
    }
    let mut theta = Vec::with_capacity(c * d + c);
    let mut bias = init.bias.to_vec();
    for (k, row) in init.weights.rows().into_iter().enumerate() {
        for j in 0..d {
            let w0 = row[j] / init.scale[j];
            theta.push(w0 * scale[j]);
            bias[k] += w0 * (mean[j] - init.mean[j]);
        }
    }
    theta.extend(bias);
    Ok(theta)
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::Rng as _;

    /// Three overlapping Gaussian-ish blobs in 4 dims with an uneven class mix.
    fn blobs(seed: u64, counts: &[usize]) -> (Array2<f32>, Vec<u32>) {
        let mut rng = crate::seed::stream(seed, &[1]);
        let n: usize = counts.iter().sum();
        let mut x = Array2::<f32>::zeros((n, 4));
        let mut y = Vec::with_capacity(n);
        let mut r = 0;
        for (c, &nc) in counts.iter().enumerate() {
            for _ in 0..nc {
                for j in 0..4 {
                    let centre = if j == c { 1.5 } else { 0.0 };
                    x[[r, j]] = centre + rng.gen_range(-1.0f32..1.0) * 1.2 + 3.0 * j as f32;
                }
                y.push(c as u32);
                r += 1;
            }
        }
        (x, y)
    }

    fn probe(params: LinearParams) -> LinearProbe {
        LinearProbe::new(params).unwrap()
    }

    #[test]
    fn balanced_weights_follow_the_scikit_learn_formula() {
        // scikit-learn compute_class_weight("balanced") definition: n / (C · n_c), C = classes
        // present; for y = [0,0,0,1] (class 2 absent): 4/(2·3) and 4/(2·1).
        let w = class_weights(&[0, 0, 0, 1], 3, ClassWeight::Balanced);
        assert!((w[0] - 4.0 / 6.0).abs() < 1e-15 && (w[1] - 2.0).abs() < 1e-15);
        assert_eq!(w[2], 0.0);
        assert_eq!(class_weights(&[0, 1], 3, ClassWeight::None), vec![1.0; 3]);
    }

    #[test]
    fn balanced_fit_equals_fit_on_replicated_minority_rows() {
        // Derivation, no source: with counts (30, 10) the balanced loss is
        // (2/3·Σ₀ℓ + 2·Σ₁ℓ)/40 = (Σ₀ℓ + 3·Σ₁ℓ)/60, the unweighted mean loss after repeating
        // each class-1 row three times — so both fits share one optimum.
        let (x, y) = blobs(7, &[30, 10]);
        let params = LinearParams {
            standardize: false,
            l2: 1e-2,
            tol: 1e-8,
            max_iter: 2000,
            ..LinearParams::default()
        };
        let balanced = probe(LinearParams {
            class_weight: ClassWeight::Balanced,
            ..params
        })
        .fit(x.view(), &y, 2, None)
        .unwrap();
        let mut rows: Vec<usize> = (0..40).collect();
        rows.extend((30..40).flat_map(|i| [i, i]));
        let xr = x.select(ndarray::Axis(0), &rows);
        let yr: Vec<u32> = rows.iter().map(|&i| y[i]).collect();
        let replicated = probe(params).fit(xr.view(), &yr, 2, None).unwrap();
        assert!(
            balanced.converged && replicated.converged,
            "{balanced:?} {replicated:?}"
        );
        let diff = (&balanced.weights - &replicated.weights).mapv(f64::abs);
        assert!(diff.iter().all(|&d| d < 1e-6), "{diff:?}");
        assert!((balanced.final_loss - replicated.final_loss).abs() < 1e-10);
        // Rebalancing moves the decision towards the minority class.
        let unweighted = probe(params).fit(x.view(), &y, 2, None).unwrap();
        let count1 = |m: &LinearModel| m.predict(x.view()).iter().filter(|&&c| c == 1).count();
        assert!(count1(&balanced) >= count1(&unweighted));
    }

    #[test]
    fn warm_start_needs_fewer_iterations() {
        // Common practice, no source: starting from the optimum of a nearby problem (the same
        // data minus a few rows) beats starting from zero on the full problem.
        let (x, y) = blobs(11, &[40, 25, 15]);
        let p = probe(LinearParams::default());
        let keep: Vec<usize> = (0..x.nrows()).filter(|i| i % 10 != 3).collect();
        let xs = x.select(ndarray::Axis(0), &keep);
        let ys: Vec<u32> = keep.iter().map(|&i| y[i]).collect();
        let nearby = p.fit(xs.view(), &ys, 3, None).unwrap();
        let cold = p.fit(x.view(), &y, 3, None).unwrap();
        let warm = p.fit(x.view(), &y, 3, Some(&nearby)).unwrap();
        assert!(cold.converged && warm.converged);
        // On this 4-dim problem the f64 phase that finishes every fit restarts without
        // curvature pairs, so the saving is at most a few steps; the warm start must not cost
        // more steps and must reach the same optimum.
        assert!(
            warm.iterations <= cold.iterations,
            "{} vs {}",
            warm.iterations,
            cold.iterations
        );
        assert!((warm.final_loss - cold.final_loss).abs() < 1e-9);
    }

    #[test]
    fn warm_start_carries_the_decision_function_across_standardisations() {
        // Derivation, no source: W₀(x − m₀)/s₀ + b₀ re-expressed for another column transform
        // (here the one fitted on 2x + 1) gives the same scores for every raw row.
        let (x, y) = blobs(3, &[20, 20, 20]);
        let a = probe(LinearParams::default())
            .fit(x.view(), &y, 3, None)
            .unwrap();
        let (m, s) = scaling::fit(x.mapv(|v| 2.0 * v + 1.0).view(), true);
        let theta = warm_start(&a, &m, &s, 3, 4).unwrap();
        let b = LinearModel {
            weights: Array2::from_shape_vec((3, 4), theta[..12].to_vec()).unwrap(),
            bias: Array1::from(theta[12..].to_vec()),
            mean: m,
            scale: s,
            converged: false,
            iterations: 0,
            evaluations: 0,
            exact_evaluations: 0,
            final_loss: 0.0,
        };
        let diff = a.decision_function(x.view()) - b.decision_function(x.view());
        assert!(diff.iter().all(|d| d.abs() < 1e-9), "{diff:?}");
        // Shapes must agree.
        let other =
            probe(LinearParams::default()).fit(x.slice(ndarray::s![.., ..3]), &y, 3, Some(&a));
        assert!(other.is_err());
    }

    #[test]
    fn fits_are_deterministic_across_threads() {
        // Common practice, no source: the same inputs give bit-identical weights, also when
        // fitted concurrently from other threads.
        let (x, y) = blobs(5, &[30, 20, 10]);
        let p = probe(LinearParams::default());
        let reference = p.fit(x.view(), &y, 3, None).unwrap();
        let others: Vec<LinearModel> = std::thread::scope(|s| {
            let handles: Vec<_> = (0..3)
                .map(|_| s.spawn(|| p.fit(x.view(), &y, 3, None).unwrap()))
                .collect();
            handles.into_iter().map(|h| h.join().unwrap()).collect()
        });
        for m in others {
            assert_eq!(m, reference);
        }
    }

    #[test]
    fn absent_class_gets_low_probability_and_rows_sum_to_one() {
        // Common practice, no source: class 3 has no rows, nothing raises its score.
        let (x, y) = blobs(9, &[20, 20, 20]);
        let m = probe(LinearParams::default())
            .fit(x.view(), &y, 4, None)
            .unwrap();
        let p = m.predict_proba(x.view());
        for row in p.rows() {
            assert!((row.sum() - 1.0).abs() < 1e-12);
            assert!(row[3] < 0.05, "{row}");
        }
        assert!(m.predict(x.view()).iter().all(|&c| c < 3));
    }

    #[test]
    fn rejects_bad_inputs_and_params() {
        // Common practice, no source.
        let (x, y) = blobs(1, &[5, 5]);
        let p = probe(LinearParams::default());
        assert!(p.fit(x.view(), &y[..9], 2, None).is_err());
        assert!(p.fit(x.view(), &y, 1, None).is_err());
        let mut bad = x.clone();
        bad[[3, 1]] = f32::NAN;
        assert!(p.fit(bad.view(), &y, 2, None).is_err());
        for params in [
            LinearParams {
                l2: -1.0,
                ..LinearParams::default()
            },
            LinearParams {
                tol: 0.0,
                ..LinearParams::default()
            },
            LinearParams {
                max_iter: 0,
                ..LinearParams::default()
            },
        ] {
            assert!(
                LinearProbe::new(params)
                    .unwrap_err()
                    .to_string()
                    .contains("fix:")
            );
        }
    }

    #[test]
    fn reports_non_convergence() {
        // Common practice, no source: one iteration cannot meet a 1e-12 tolerance.
        let (x, y) = blobs(2, &[20, 20]);
        let m = probe(LinearParams {
            max_iter: 1,
            tol: 1e-12,
            ..LinearParams::default()
        })
        .fit(x.view(), &y, 2, None)
        .unwrap();
        assert!(!m.converged);
        assert_eq!(m.iterations, 1);
    }
}
