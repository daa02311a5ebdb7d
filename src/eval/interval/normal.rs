//! The standard normal distribution, for the central-limit interval: Φ from erfc (a power
//! series below 3, a Lentz continued fraction above; Abramowitz & Stegun 7.1.6 and 7.1.14),
//! and its quantile by bisection refined with Newton steps.

const SQRT_PI: f64 = 1.772_453_850_905_516;

/// Φ(x) = P(Z ≤ x) for a standard normal Z.
pub fn normal_cdf(x: f64) -> f64 {
    if x.is_nan() {
        return f64::NAN;
    }
    let u = x / std::f64::consts::SQRT_2;
    if u < 0.0 {
        0.5 * erfc(-u)
    } else {
        1.0 - 0.5 * erfc(u)
    }
}

/// erfc(x) for x ≥ 0.
fn erfc(x: f64) -> f64 {
    if x.is_infinite() {
        return 0.0;
    }
    if x < 3.0 {
        // erf(x) = 2/√π · e^{−x²} · Σ 2ⁿ x^{2n+1} / (1·3·…·(2n+1)): all terms positive.
        let mut term = x;
        let mut sum = x;
        let mut n = 0.0;
        while term > 1e-17 * sum {
            n += 1.0;
            term *= 2.0 * x * x / (2.0 * n + 1.0);
            sum += term;
        }
        1.0 - 2.0 / SQRT_PI * (-x * x).exp() * sum
    } else {
        // erfc(x) = e^{−x²}/√π · 1/(x + (1/2)/(x + 1/(x + (3/2)/(x + …)))).
        const TINY: f64 = 1e-300;
        let mut f = x;
        let mut c = x;
        let mut d = 0.0;
        for m in 1..500 {
            let a = m as f64 / 2.0;
            d = x + a * d;
            d = if d.abs() < TINY { 1.0 / TINY } else { 1.0 / d };
            c = x + a / c;
            if c.abs() < TINY {
                c = TINY;
            }
            let delta = c * d;
            f *= delta;
            if (delta - 1.0).abs() < 1e-16 {
                break;
            }
        }
        (-x * x).exp() / SQRT_PI / f
    }
}

/// The x with Φ(x) = p.
pub fn normal_quantile(p: f64) -> f64 {
    if p.is_nan() || !(0.0..=1.0).contains(&p) {
        return f64::NAN;
    }
    if p == 0.0 {
        return f64::NEG_INFINITY;
    }
    if p == 1.0 {
        return f64::INFINITY;
    }
    let (mut lo, mut hi) = (-40.0f64, 40.0f64);
    let mut x = 0.0;
    for _ in 0..200 {
        let f = normal_cdf(x) - p;
        if f > 0.0 {
            hi = x;
        } else {
            lo = x;
        }
        let pdf = (-0.5 * x * x).exp() / (2.0 * std::f64::consts::PI).sqrt();
        let mut next = x - f / pdf;
        if !next.is_finite() || next <= lo || next >= hi {
            next = 0.5 * (lo + hi);
        }
        if (next - x).abs() <= 1e-15 * x.abs().max(1e-300) || hi - lo < 1e-15 {
            return next;
        }
        x = next;
    }
    x
}
