//! Limited-memory BFGS for smooth unconstrained minimisation in f64.
//!
//! Written here rather than taken from a crate so that the stopping rule, the line search and
//! every floating-point operation are fixed: the linear probe must give bit-identical weights
//! on every run and machine thread count.
//!
//! The method is the standard one (Nocedal & Wright, *Numerical Optimization*, 2nd ed.):
//! the two-loop recursion (Alg. 7.4) with the initial Hessian scaled by `sᵀy / yᵀy` (eq. 7.20),
//! and a line search satisfying the strong Wolfe conditions by bracketing and zooming
//! (Alg. 3.5 and 3.6) with safeguarded cubic interpolation.
//!
//! [`minimize_preconditioned`] replaces the identity in the initial Hessian by a fixed
//! symmetric positive definite matrix `P` (Nocedal & Wright §7.2: any `H₀` may seed the
//! recursion), scaled by `sᵀy / yᵀPy`. That is L-BFGS run on the variables `L⁻¹x` for
//! `P = L Lᵀ`: the same minimiser and stopping rule, but on a problem whose curvature `P`
//! has evened out, so far fewer iterations.

use std::collections::VecDeque;

/// Stopping and memory settings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Options {
    /// Number of correction pairs kept.
    pub memory: usize,
    /// Converged when the largest absolute gradient component is at most `tol`.
    pub tol: f64,
    /// Upper bound on iterations (accepted line-search steps).
    pub max_iter: usize,
    /// Return at the first failed line search instead of restarting from steepest descent:
    /// for a caller that finishes the minimisation with a more precise objective.
    pub stop_on_failed_search: bool,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            memory: 10,
            tol: 1e-6,
            max_iter: 500,
            stop_on_failed_search: false,
        }
    }
}

/// Where the minimiser stopped.
#[derive(Debug, Clone, PartialEq)]
pub struct Outcome {
    /// The final point.
    pub x: Vec<f64>,
    /// The objective at `x`.
    pub value: f64,
    /// max |∂f/∂xᵢ| at `x`.
    pub grad_max: f64,
    /// Accepted steps taken.
    pub iterations: usize,
    /// Objective evaluations made (the start and every line-search trial).
    pub evaluations: usize,
    /// Whether `grad_max <= tol` (false after `max_iter`, a failed line search, or a
    /// non-finite objective at the start).
    pub converged: bool,
    /// The correction pairs held at the end, to continue from with [`minimize_from`].
    pub memory: Memory,
}

/// The correction pairs of a run, handed from one run to the next so that a run finishing
/// another's work (e.g. in higher precision) keeps its curvature estimate instead of
/// restarting from steepest descent.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Memory(VecDeque<Pair>);

/// Sufficient-decrease constant of the Wolfe conditions.
const C1: f64 = 1e-4;
/// Curvature constant (0.9 is the usual choice for quasi-Newton methods).
const C2: f64 = 0.9;
/// Trial steps allowed per line search.
const MAX_TRIALS: usize = 40;

/// Minimises `objective` from `x0`. The closure writes the gradient at `x` into its second
/// argument and returns the value; a non-finite value marks `x` as outside the domain (the
/// line search then steps back).
pub fn minimize<F>(inner: F, x0: Vec<f64>, opts: &Options) -> Outcome
where
    F: FnMut(&[f64], &mut [f64]) -> f64,
{
    minimize_from(inner, x0, Memory::default(), opts)
}

/// [`minimize`] starting with the correction pairs `memory` (from an earlier run's
/// [`Outcome::memory`]; at most `opts.memory` of the newest are kept).
pub fn minimize_from<F>(inner: F, x0: Vec<f64>, memory: Memory, opts: &Options) -> Outcome
where
    F: FnMut(&[f64], &mut [f64]) -> f64,
{
    run(inner, x0, memory, None, opts)
}

/// A fixed symmetric positive definite matrix `P`, applied as `out = P v`.
pub type Preconditioner<'a> = &'a (dyn Fn(&[f64], &mut [f64]) + Sync);

/// [`minimize_from`] with `precond` as the initial inverse Hessian (see the module notes).
/// Correction pairs handed over through [`Memory`] must come from a run with the same `P`.
pub fn minimize_preconditioned<F>(
    inner: F,
    x0: Vec<f64>,
    memory: Memory,
    precond: Preconditioner<'_>,
    opts: &Options,
) -> Outcome
where
    F: FnMut(&[f64], &mut [f64]) -> f64,
{
    run(inner, x0, memory, Some(precond), opts)
}

fn run<F>(
    mut inner: F,
    x0: Vec<f64>,
    memory: Memory,
    precond: Option<Preconditioner<'_>>,
    opts: &Options,
) -> Outcome
where
    F: FnMut(&[f64], &mut [f64]) -> f64,
{
    let apply = |v: &[f64], out: &mut [f64]| match precond {
        Some(p) => p(v, out),
        None => out.copy_from_slice(v),
    };
    let mut evaluations = 0;
    let mut objective = |x: &[f64], g: &mut [f64]| {
        evaluations += 1;
        inner(x, g)
    };
    let n = x0.len();
    let mut x = x0;
    let mut g = vec![0.0; n];
    let mut f = objective(&x, &mut g);
    let mut iterations = 0;
    if !f.is_finite() || g.iter().any(|v| !v.is_finite()) {
        return Outcome {
            grad_max: max_abs(&g),
            x,
            value: f,
            iterations,
            evaluations: 1,
            converged: false,
            memory,
        };
    }
    let mut history = memory.0;
    while history.len() > opts.memory {
        history.pop_front();
    }
    let mut d = vec![0.0; n];
    let mut scratch = vec![0.0; n];
    while iterations < opts.max_iter && max_abs(&g) > opts.tol {
        direction(&history, &g, &mut d, &mut scratch, &apply);
        let mut slope = dot(&d, &g);
        if slope >= 0.0 || slope.is_nan() {
            // Not a descent direction (only possible through rounding): restart.
            history.clear();
            direction(&history, &g, &mut d, &mut scratch, &apply);
            slope = dot(&d, &g);
        }
        // Without curvature pairs a plain gradient step is capped at unit length; a
        // preconditioned one is already scaled like a Newton step, so it starts at 1.
        let first = if history.is_empty() && precond.is_none() {
            (1.0 / norm(&d)).min(1.0)
        } else {
            1.0
        };
        let Some(step) = line_search(&mut objective, &x, f, &d, slope, first) else {
            if history.is_empty() || opts.stop_on_failed_search {
                break; // even steepest descent makes no progress: stop honestly
            }
            history.clear();
            continue;
        };
        let s: Vec<f64> = step.x.iter().zip(&x).map(|(a, b)| a - b).collect();
        let y: Vec<f64> = step.g.iter().zip(&g).map(|(a, b)| a - b).collect();
        let sy = dot(&s, &y);
        let yy = dot(&y, &y);
        // Keep the pair only if it carries positive curvature (keeps H positive definite).
        if sy > f64::EPSILON * yy && yy > 0.0 && opts.memory > 0 {
            apply(&y, &mut scratch);
            let y_p_y = dot(&y, &scratch);
            if y_p_y > 0.0 && y_p_y.is_finite() {
                if history.len() == opts.memory {
                    history.pop_front();
                }
                history.push_back(Pair {
                    s,
                    y,
                    rho: 1.0 / sy,
                    y_p_y,
                });
            }
        }
        x = step.x;
        g = step.g;
        f = step.f;
        iterations += 1;
    }
    let grad_max = max_abs(&g);
    Outcome {
        x,
        value: f,
        grad_max,
        iterations,
        evaluations,
        converged: grad_max <= opts.tol,
        memory: Memory(history),
    }
}

/// One correction pair `s = x₊ − x`, `y = g₊ − g`, with `rho = 1 / sᵀy` and `yᵀPy` (`yᵀy`
/// without a preconditioner).
#[derive(Debug, Clone, PartialEq)]
struct Pair {
    s: Vec<f64>,
    y: Vec<f64>,
    rho: f64,
    y_p_y: f64,
}

/// `d = −H g` by the two-loop recursion, `H₀ = γ P` with `γ = sᵀy / yᵀPy` of the newest pair
/// (γ = 1 without pairs). `q` is scratch space of `g`'s length.
fn direction(
    history: &VecDeque<Pair>,
    g: &[f64],
    d: &mut [f64],
    q: &mut [f64],
    apply: &dyn Fn(&[f64], &mut [f64]),
) {
    q.iter_mut().zip(g).for_each(|(qi, gi)| *qi = -gi);
    let mut alpha = vec![0.0; history.len()];
    for (a, p) in alpha.iter_mut().zip(history).rev() {
        *a = p.rho * dot(&p.s, q);
        axpy(-*a, &p.y, q);
    }
    apply(q, d);
    if let Some(last) = history.back() {
        let gamma = 1.0 / (last.rho * last.y_p_y);
        d.iter_mut().for_each(|v| *v *= gamma);
    }
    for (a, p) in alpha.iter().zip(history) {
        let b = p.rho * dot(&p.y, d);
        axpy(a - b, &p.s, d);
    }
}

/// An evaluated trial point of the line search.
struct Trial {
    step: f64,
    x: Vec<f64>,
    g: Vec<f64>,
    f: f64,
    /// Directional derivative gᵀd at the point.
    slope: f64,
}

/// Strong-Wolfe line search along `d` from `x` (value `f0`, slope `slope0 < 0`). Returns
/// `None` when no step with sufficient decrease is found.
fn line_search<F>(
    objective: &mut F,
    x: &[f64],
    f0: f64,
    d: &[f64],
    slope0: f64,
    first: f64,
) -> Option<Trial>
where
    F: FnMut(&[f64], &mut [f64]) -> f64,
{
    let mut eval = |step: f64| -> Trial {
        let xt: Vec<f64> = x.iter().zip(d).map(|(a, b)| a + step * b).collect();
        let mut gt = vec![0.0; x.len()];
        let ft = objective(&xt, &mut gt);
        let st = dot(&gt, d);
        Trial {
            step,
            x: xt,
            g: gt,
            f: ft,
            slope: st,
        }
    };
    let armijo = |t: &Trial| t.f.is_finite() && t.f <= f0 + C1 * t.step * slope0;
    let curvature = |t: &Trial| t.slope.abs() <= -C2 * slope0;

    // Bracketing phase: grow the step until it brackets a Wolfe point.
    let mut prev = Trial {
        step: 0.0,
        x: x.to_vec(),
        g: Vec::new(),
        f: f0,
        slope: slope0,
    };
    let mut step = first;
    let mut trials = 0;
    let (mut lo, mut hi) = loop {
        if trials == MAX_TRIALS {
            return None;
        }
        trials += 1;
        let t = eval(step);
        if !armijo(&t) || (prev.step > 0.0 && t.f >= prev.f) {
            break (prev, t);
        }
        if curvature(&t) && t.slope.is_finite() {
            return Some(t);
        }
        if t.slope >= 0.0 {
            break (t, prev);
        }
        step = 2.0 * t.step;
        prev = t;
    };

    // Zoom phase: `lo` satisfies sufficient decrease with the lowest value so far; the
    // interval between `lo` and `hi` contains a strong Wolfe point.
    while trials < MAX_TRIALS {
        trials += 1;
        let width = (hi.step - lo.step).abs();
        if width <= f64::EPSILON * lo.step.abs().max(hi.step.abs()) {
            break;
        }
        let t = eval(interpolate(&lo, &hi));
        if !armijo(&t) || t.f >= lo.f {
            hi = t;
        } else {
            if curvature(&t) && t.slope.is_finite() {
                return Some(t);
            }
            if t.slope * (hi.step - lo.step) >= 0.0 {
                hi = lo;
            }
            lo = t;
        }
    }
    // No strong Wolfe point in the budget: accept the best point with sufficient decrease.
    (lo.step > 0.0 && lo.f < f0 && !lo.g.is_empty()).then_some(lo)
}

/// Minimiser of the cubic through both trial points (values and slopes), kept inside the
/// middle 80 % of the interval; bisection when the cubic is undefined or a value is not finite.
fn interpolate(a: &Trial, b: &Trial) -> f64 {
    let (lo, hi) = (a.step.min(b.step), a.step.max(b.step));
    let mid = 0.5 * (lo + hi);
    let finite = [a.f, b.f, a.slope, b.slope].iter().all(|v| v.is_finite());
    if !finite {
        return mid;
    }
    let d1 = a.slope + b.slope - 3.0 * (a.f - b.f) / (a.step - b.step);
    let disc = d1 * d1 - a.slope * b.slope;
    if disc < 0.0 {
        return mid;
    }
    let d2 = (b.step - a.step).signum() * disc.sqrt();
    let t = b.step - (b.step - a.step) * (b.slope + d2 - d1) / (b.slope - a.slope + 2.0 * d2);
    let margin = 0.1 * (hi - lo);
    if t.is_finite() && t >= lo + margin && t <= hi - margin {
        t
    } else {
        mid
    }
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

fn norm(a: &[f64]) -> f64 {
    dot(a, a).sqrt()
}

fn max_abs(a: &[f64]) -> f64 {
    a.iter().fold(0.0, |m, v| {
        if v.abs() > m || v.is_nan() {
            v.abs()
        } else {
            m
        }
    })
}

/// `y += a·x`.
fn axpy(a: f64, x: &[f64], y: &mut [f64]) {
    y.iter_mut().zip(x).for_each(|(yi, xi)| *yi += a * xi);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quadratic_reaches_its_minimiser() {
        // Common practice, no source: f(x) = ½ xᵀAx − bᵀx with A diagonal has x* = b / diag(A).
        let a = [1.0, 10.0, 100.0, 0.5];
        let b = [1.0, -2.0, 3.0, 4.0];
        let out = minimize(
            |x, g| {
                let mut f = 0.0;
                for i in 0..4 {
                    g[i] = a[i] * x[i] - b[i];
                    f += 0.5 * a[i] * x[i] * x[i] - b[i] * x[i];
                }
                f
            },
            vec![0.0; 4],
            &Options {
                tol: 1e-10,
                ..Options::default()
            },
        );
        assert!(out.converged, "{out:?}");
        for i in 0..4 {
            assert!((out.x[i] - b[i] / a[i]).abs() < 1e-9, "{out:?}");
        }
    }

    fn rosenbrock(x: &[f64], g: &mut [f64]) -> f64 {
        let (a, b) = (x[0], x[1]);
        g[0] = -2.0 * (1.0 - a) - 400.0 * a * (b - a * a);
        g[1] = 200.0 * (b - a * a);
        (1.0 - a).powi(2) + 100.0 * (b - a * a).powi(2)
    }

    #[test]
    fn rosenbrock_from_the_classic_start() {
        // From memory: Rosenbrock's function has its minimum 0 at (1, 1); (−1.2, 1) is the
        // customary starting point.
        let out = minimize(
            rosenbrock,
            vec![-1.2, 1.0],
            &Options {
                tol: 1e-8,
                ..Options::default()
            },
        );
        assert!(out.converged, "{out:?}");
        assert!(
            (out.x[0] - 1.0).abs() < 1e-6 && (out.x[1] - 1.0).abs() < 1e-6,
            "{out:?}"
        );
        assert!(out.value < 1e-12);
        assert!(out.iterations < 100, "{}", out.iterations);
    }

    #[test]
    fn stops_without_converging_at_max_iter() {
        // Common practice, no source: the budget is honoured and reported.
        let out = minimize(
            rosenbrock,
            vec![-1.2, 1.0],
            &Options {
                max_iter: 3,
                ..Options::default()
            },
        );
        assert_eq!(out.iterations, 3);
        assert!(!out.converged);
    }

    #[test]
    fn steps_back_from_a_non_finite_region() {
        // Common practice, no source: f = 10x − ln(x) has its minimum at x = 0.1 and is
        // undefined (NaN) for x ≤ 0, where the first unit-length step from x = 0.5 lands.
        let out = minimize(
            |x, g| {
                g[0] = 10.0 - 1.0 / x[0];
                10.0 * x[0] - x[0].ln()
            },
            vec![0.5],
            &Options::default(),
        );
        assert!(out.converged, "{out:?}");
        assert!((out.x[0] - 0.1).abs() < 1e-6, "{out:?}");
    }

    #[test]
    fn exact_preconditioner_solves_an_ill_conditioned_quadratic_at_once() {
        // Derivation, no source: with H₀ = A⁻¹ on f(x) = ½ xᵀAx − bᵀx the first direction is
        // the Newton step, so the unit step lands on x* = A⁻¹b; without it, a condition number
        // of 10⁶ takes many steps.
        let a = [1e-3, 1.0, 30.0, 1e3];
        let b = [1.0, -2.0, 3.0, 4.0];
        let f = |x: &[f64], g: &mut [f64]| {
            let mut v = 0.0;
            for i in 0..4 {
                g[i] = a[i] * x[i] - b[i];
                v += 0.5 * a[i] * x[i] * x[i] - b[i] * x[i];
            }
            v
        };
        let inv = |v: &[f64], out: &mut [f64]| {
            for i in 0..4 {
                out[i] = v[i] / a[i];
            }
        };
        let opts = Options {
            tol: 1e-10,
            ..Options::default()
        };
        let pre = minimize_preconditioned(f, vec![0.0; 4], Memory::default(), &inv, &opts);
        let plain = minimize(f, vec![0.0; 4], &opts);
        assert!(pre.converged && plain.converged, "{pre:?} {plain:?}");
        assert!(pre.iterations <= 2, "{pre:?}");
        assert!(plain.iterations > 5 * pre.iterations, "{plain:?}");
        for i in 0..4 {
            assert!((pre.x[i] - b[i] / a[i]).abs() < 1e-7, "{pre:?}");
        }
    }

    #[test]
    fn non_finite_start_is_reported() {
        // Common practice, no source.
        let out = minimize(|_, _| f64::NAN, vec![0.0], &Options::default());
        assert!(!out.converged);
        assert_eq!(out.iterations, 0);
    }
}
