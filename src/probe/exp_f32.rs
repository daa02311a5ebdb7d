//! `exp` on f32 slices for the linear probe's f32 phase, written branch-free so the compiler
//! vectorises it: the softmax takes one exponential per class and row, and the scalar f64
//! `exp` there cost about as much as the two matrix products of an evaluation.
//!
//! Range reduction `x = n ln 2 + r`, |r| ≤ ln 2 / 2, with ln 2 split in two parts, then a
//! degree-6 polynomial for `eʳ` (Cephes `expf`, S. L. Moshier) and `2ⁿ` put into the exponent
//! bits. Inputs are the softmax's logits minus their maximum (≤ 0); below −87 the result is
//! clamped to e⁻⁸⁷ ≈ 1.6e-38 instead of going subnormal, which no probability sum can notice.
//! Relative error below 2e-7 over the range (tested against f64 `exp`).

const LOG2E: f32 = std::f32::consts::LOG2_E;
const LN2_HI: f32 = 0.693_359_4;
const LN2_LO: f32 = -2.121_944_4e-4;
/// 1.5 · 2²³: adding it rounds a float of magnitude below 2²² to an integer in the low bits.
const ROUND: f32 = 12_582_912.0;
const LOWEST: f32 = -87.0;

/// `out[i] = exp(x[i] − shift)` for `x[i] − shift ≤ 0`; returns `Σ out[i]` accumulated in f64.
/// Always inlined, so it is vectorised as wide as its caller is compiled.
#[inline(always)]
pub(crate) fn exp_shifted(x: &[f32], shift: f32, out: &mut [f32]) -> f64 {
    for (o, &v) in out.iter_mut().zip(x) {
        *o = exp_nonpositive(v - shift);
    }
    out.iter().map(|&e| f64::from(e)).sum()
}

#[inline(always)]
fn exp_nonpositive(x: f32) -> f32 {
    let x = x.clamp(LOWEST, 0.0);
    let t = x * LOG2E + ROUND;
    let n = t - ROUND;
    let r = x - n * LN2_HI - n * LN2_LO;
    let mut p = 1.987_569_1e-4f32;
    p = p * r + 1.398_199_9e-3;
    p = p * r + 8.333_452e-3;
    p = p * r + 4.166_579_6e-2;
    p = p * r + 1.666_666_5e-1;
    p = p * r + 0.5;
    let er = p * r * r + r + 1.0;
    // n is an integer in [−126, 0] held in t's low mantissa bits.
    let biased = (t.to_bits() as i32).wrapping_sub(ROUND.to_bits() as i32) + 127;
    er * f32::from_bits((biased as u32) << 23)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn matches_f64_exp_to_f32_rounding() {
        // Common practice, no source: a float exp within a few ulp of the f64 reference.
        let xs: Vec<f32> = (0..=200_000)
            .map(|i| -87.0 * i as f32 / 200_000.0)
            .collect();
        let mut out = vec![0.0; xs.len()];
        let sum = exp_shifted(&xs, 0.0, &mut out);
        let mut want_sum = 0.0;
        for (&x, &e) in xs.iter().zip(&out) {
            let want = f64::from(x).exp();
            want_sum += want;
            let rel = (f64::from(e) - want).abs() / want;
            assert!(rel < 2e-7, "exp({x}) = {e}, want {want}, rel {rel}");
        }
        assert!((sum - want_sum).abs() / want_sum < 1e-6);
        assert_eq!(exp_nonpositive(0.0), 1.0);
        assert!(exp_nonpositive(-1e4) > 0.0 && exp_nonpositive(-1e4) < 1e-37);
    }

    #[test]
    fn shift_is_subtracted() {
        // Common practice, no source: exp(x − max) of [0, ln 2] shifted by ln 2 is [1/2, 1].
        let mut out = [0.0; 2];
        let ln2 = std::f32::consts::LN_2;
        let s = exp_shifted(&[0.0, ln2], ln2, &mut out);
        assert!((out[0] - 0.5).abs() < 1e-7 && out[1] == 1.0);
        assert!((s - 1.5).abs() < 1e-7);
    }
}
