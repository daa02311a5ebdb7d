//! Paired differences between methods over the folds of a repeated cross-validation, with the
//! corrected resampled t-test of Nadeau & Bengio (2003, "Inference for the Generalization
//! Error", Machine Learning 52). The plain paired t-test treats the J fold scores as
//! independent, but their training sets overlap, so its intervals are far too narrow; the
//! correction inflates the variance by n_test/n_train.
//!
//! The Student-t distribution is computed here (regularised incomplete beta by a Lentz
//! continued fraction, quantile by safeguarded Newton on the CDF) rather than pulled in as a
//! dependency: two functions of forty lines each.

use serde::{Deserialize, Serialize};

/// A mean difference with its two-sided confidence interval and p-value.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Interval {
    /// Mean of the paired differences.
    pub mean: f64,
    /// Lower bound of the interval.
    pub low: f64,
    /// Upper bound of the interval.
    pub high: f64,
    /// Two-sided p-value of "mean difference = 0".
    pub p_value: f64,
    /// Number of paired differences.
    pub n: usize,
}

/// Corrected resampled t-interval for `diffs` (one difference per fold and repeat, J of them):
/// variance (1/J + n_test/n_train) · s², s² the sample variance (ddof 1), t with J − 1 degrees
/// of freedom, two-sided at `level` (e.g. 0.95).
///
/// Edge cases, chosen so a report can always print something honest:
/// - J < 2: `mean` is the mean of what there is (NaN if nothing), `low`, `high` and `p_value`
///   are NaN — one fold says nothing about spread.
/// - s² = 0 (every fold moved by exactly the same amount): no interval either (NaN bounds and
///   p). A zero spread is not evidence of a certain effect: it is what two or three test rows
///   per fold produce, and a limit of p = 0 or 1 from it would be printed as a finding.
/// - `level` outside (0, 1), or n_train ≤ 0, n_test < 0, or non-finite inputs: NaN bounds.
pub fn corrected_paired_t(diffs: &[f64], n_train: f64, n_test: f64, level: f64) -> Interval {
    let j = diffs.len();
    let mean = if j == 0 {
        f64::NAN
    } else {
        diffs.iter().sum::<f64>() / j as f64
    };
    let nan = Interval {
        mean,
        low: f64::NAN,
        high: f64::NAN,
        p_value: f64::NAN,
        n: j,
    };
    let valid_sizes = n_train > 0.0 && n_test >= 0.0 && n_train.is_finite() && n_test.is_finite();
    if j < 2 || !valid_sizes || !mean.is_finite() {
        return nan;
    }
    let var = diffs.iter().map(|d| (d - mean) * (d - mean)).sum::<f64>() / (j - 1) as f64;
    if var == 0.0 {
        return nan;
    }
    let se = ((1.0 / j as f64 + n_test / n_train) * var).sqrt();
    let df = (j - 1) as f64;
    let t = mean / se;
    let p_value = 2.0 * t_sf(t.abs(), df);
    let q = if level > 0.0 && level < 1.0 {
        t_quantile(1.0 - (1.0 - level) / 2.0, df)
    } else {
        f64::NAN
    };
    Interval {
        mean,
        low: mean - q * se,
        high: mean + q * se,
        p_value,
        n: j,
    }
}

/// Student-t CDF with `df` degrees of freedom.
pub fn t_cdf(t: f64, df: f64) -> f64 {
    if t.is_nan() || df.is_nan() || df <= 0.0 {
        return f64::NAN;
    }
    if t >= 0.0 {
        1.0 - t_sf(t, df)
    } else {
        t_sf(-t, df)
    }
}

/// Upper tail P(T > t) for t ≥ 0: ½·I_{df/(df+t²)}(df/2, ½) (Abramowitz & Stegun 26.7.1 via
/// 26.5.27), which keeps full relative precision far out in the tail.
fn t_sf(t: f64, df: f64) -> f64 {
    if t.is_infinite() {
        return 0.0;
    }
    let x = df / (df + t * t);
    0.5 * incomplete_beta(df / 2.0, 0.5, x)
}

/// Student-t quantile: the t with CDF(t) = p, by Newton steps on the CDF kept inside a
/// bisection bracket.
pub fn t_quantile(p: f64, df: f64) -> f64 {
    if p.is_nan() || df.is_nan() || df <= 0.0 || !(0.0..=1.0).contains(&p) {
        return f64::NAN;
    }
    if p == 0.5 {
        0.0
    } else if p < 0.5 {
        -t_upper_quantile(p, df)
    } else {
        t_upper_quantile(1.0 - p, df)
    }
}

/// The t ≥ 0 with P(T > t) = q, for 0 ≤ q < ½; working on the tail keeps precision for tiny q.
fn t_upper_quantile(q: f64, df: f64) -> f64 {
    if q <= 0.0 {
        return f64::INFINITY;
    }
    let (mut lo, mut hi) = (0.0f64, 1.0f64);
    while t_sf(hi, df) > q {
        lo = hi;
        hi *= 2.0;
        if hi > 1e300 {
            return f64::INFINITY;
        }
    }
    let mut t = 0.5 * (lo + hi);
    for _ in 0..200 {
        let f = t_sf(t, df) - q; // decreasing in t
        if f > 0.0 {
            lo = t;
        } else {
            hi = t;
        }
        let step = f / t_pdf(t, df); // sf' = −pdf, so Newton: t + f/pdf
        let mut next = t + step;
        if !next.is_finite() || next <= lo || next >= hi {
            next = 0.5 * (lo + hi);
        }
        if (next - t).abs() <= 1e-15 * t.abs().max(1e-300) || hi - lo <= 1e-15 * hi {
            return next;
        }
        t = next;
    }
    t
}

fn t_pdf(t: f64, df: f64) -> f64 {
    let ln = ln_gamma((df + 1.0) / 2.0)
        - ln_gamma(df / 2.0)
        - 0.5 * (df * std::f64::consts::PI).ln()
        - (df + 1.0) / 2.0 * (1.0 + t * t / df).ln();
    ln.exp()
}

/// Regularised incomplete beta I_x(a, b), by the continued fraction of Numerical Recipes
/// (3rd ed., §6.4) evaluated with the modified Lentz method, using the symmetry
/// I_x(a, b) = 1 − I_{1−x}(b, a) where the fraction converges faster.
pub fn incomplete_beta(a: f64, b: f64, x: f64) -> f64 {
    if x.is_nan() || a.is_nan() || b.is_nan() || a <= 0.0 || b <= 0.0 {
        return f64::NAN;
    }
    if x <= 0.0 {
        return 0.0;
    }
    if x >= 1.0 {
        return 1.0;
    }
    let ln_front = ln_gamma(a + b) - ln_gamma(a) - ln_gamma(b) + a * x.ln() + b * (1.0 - x).ln();
    if x < (a + 1.0) / (a + b + 2.0) {
        ln_front.exp() * beta_fraction(a, b, x) / a
    } else {
        1.0 - ln_front.exp() * beta_fraction(b, a, 1.0 - x) / b
    }
}

fn beta_fraction(a: f64, b: f64, x: f64) -> f64 {
    const TINY: f64 = 1e-300;
    const EPS: f64 = 1e-16;
    // Keeps a denominator of the modified Lentz recurrence away from zero.
    let nonzero = |v: f64| if v.abs() < TINY { TINY } else { v };
    let (qab, qap, qam) = (a + b, a + 1.0, a - 1.0);
    let mut c = 1.0;
    let mut d = 1.0 / nonzero(1.0 - qab * x / qap);
    let mut h = d;
    // One Lentz step with coefficient `aa`; returns the factor applied to `h`.
    let mut step = |aa: f64| {
        d = 1.0 / nonzero(1.0 + aa * d);
        c = nonzero(1.0 + aa / c);
        d * c
    };
    for m in 1..10_000 {
        let m = m as f64;
        let m2 = 2.0 * m;
        h *= step(m * (b - m) * x / ((qam + m2) * (a + m2)));
        let del = step(-(a + m) * (qab + m) * x / ((a + m2) * (qap + m2)));
        h *= del;
        if (del - 1.0).abs() < EPS {
            break;
        }
    }
    h
}

/// ln Γ(x) for x > 0 by the Lanczos approximation (g = 7, 9 coefficients; relative error
/// around 1e-15), with the reflection formula below ½.
pub fn ln_gamma(x: f64) -> f64 {
    const G: f64 = 7.0;
    const COEF: [f64; 9] = [
        0.999_999_999_999_809_9,
        676.520_368_121_885_1,
        -1_259.139_216_722_402_8,
        771.323_428_777_653_1,
        -176.615_029_162_140_6,
        12.507_343_278_686_905,
        -0.138_571_095_265_720_12,
        9.984_369_578_019_572e-6,
        1.505_632_735_149_311_6e-7,
    ];
    if x < 0.5 {
        let pi = std::f64::consts::PI;
        return (pi / (pi * x).sin()).ln() - ln_gamma(1.0 - x);
    }
    let x = x - 1.0;
    let mut sum = COEF[0];
    for (i, &c) in COEF.iter().enumerate().skip(1) {
        sum += c / (x + i as f64);
    }
    let t = x + G + 0.5;
    0.5 * (2.0 * std::f64::consts::PI).ln() + (x + 0.5) * t.ln() - t + sum.ln()
}
