//! The exact f64 distances that decide the final neighbour order. The fast f32 pass only
//! nominates candidates; these functions rank them, so results equal a plain f64 brute force
//! evaluated with the same formulas (same summation order, hence bit-identical ties).

use super::Metric;

/// Σ (aᵢ − bᵢ)², summed left to right in f64.
#[inline]
pub(crate) fn squared_euclidean(a: &[f32], b: &[f32]) -> f64 {
    a.iter()
        .zip(b)
        .map(|(&x, &y)| {
            let t = f64::from(x) - f64::from(y);
            t * t
        })
        .fold(0.0, |acc, t| acc + t)
}

/// √(Σ aᵢ²), summed left to right in f64.
#[inline]
pub(crate) fn norm(a: &[f32]) -> f64 {
    a.iter()
        .map(|&x| f64::from(x) * f64::from(x))
        .fold(0.0, |acc, t| acc + t)
        .sqrt()
}

/// 1 − a·b / (‖a‖ ‖b‖), with the similarity of a zero row taken as 0 (distance 1): a zero
/// embedding has no direction, so it is equally far from everything.
#[inline]
pub(crate) fn cosine(a: &[f32], b: &[f32], norm_a: f64, norm_b: f64) -> f64 {
    if norm_a == 0.0 || norm_b == 0.0 {
        return 1.0;
    }
    let dot = a
        .iter()
        .zip(b)
        .map(|(&x, &y)| f64::from(x) * f64::from(y))
        .fold(0.0, |acc, t| acc + t);
    1.0 - dot / (norm_a * norm_b)
}

/// The ranking key for a pair: squared distance for euclidean (monotone in the distance and
/// free of a rounding `sqrt`), 1 − cos for cosine. NaN ranks last, as +∞.
#[inline]
pub(crate) fn rank_key(metric: Metric, a: &[f32], b: &[f32], norm_a: f64, norm_b: f64) -> f64 {
    let v = match metric {
        Metric::Euclidean => squared_euclidean(a, b),
        Metric::Cosine => cosine(a, b, norm_a, norm_b),
    };
    if v.is_nan() { f64::INFINITY } else { v }
}

/// The reported distance for a ranking key: √ for euclidean (clamped at 0), 1 − cos for
/// cosine (clamped at 0, since rounding can push an identical pair a hair below).
#[inline]
pub(crate) fn reported(metric: Metric, key: f64) -> f32 {
    match metric {
        Metric::Euclidean => key.max(0.0).sqrt() as f32,
        Metric::Cosine => key.max(0.0) as f32,
    }
}
