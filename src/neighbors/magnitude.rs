//! The largest row norm the neighbour search can handle. Its fast pass ranks candidates with
//! squared norms and dot products in f32, whose largest finite value is about 3.4e38; a row
//! whose squared norm (plus another's) passes that becomes infinite and every distance from it
//! meaningless (at norm 1e19 a row can become its own partner). Such rows are refused with
//! their position rather than silently mis-ranked.

use ndarray::ArrayView2;

/// Row norms at or above this overflow the f32 pass: (f32::MAX / 4)^½ ≈ 9.2e18, leaving room
/// for ‖a‖² + ‖b‖².
pub const MAX_ROW_NORM: f64 = 9.2e18;

/// The first row (0-based) whose norm is too large for the neighbour search, with its norm.
/// Non-finite rows are left to the non-finite checks.
pub fn first_oversized_row(x: ArrayView2<f32>) -> Option<(usize, f64)> {
    x.rows().into_iter().enumerate().find_map(|(i, r)| {
        let n = r
            .iter()
            .map(|&v| f64::from(v) * f64::from(v))
            .sum::<f64>()
            .sqrt();
        (n.is_finite() && n >= MAX_ROW_NORM).then_some((i, n))
    })
}

/// Refuses a dataset read from `path` when a row's norm is too large for the neighbour
/// search, naming the first such row. Called by the commands that search neighbours; a file
/// can still be inspected.
pub fn check(path: &std::path::Path, x: ArrayView2<f32>) -> crate::Result<()> {
    match first_oversized_row(x) {
        None => Ok(()),
        Some((row, norm)) => Err(crate::Error::input_at(
            path,
            format!("row {row}"),
            format!(
                "row norm {norm:.3e} is too large for float32 distance arithmetic (limit {MAX_ROW_NORM:.1e})"
            ),
            "rescale the embeddings (e.g. divide every value by 1e10) or unit-normalise them",
        )),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_the_first_row_past_f32_range() {
        // f32::MAX ≈ 3.4028235e38 (IEEE 754 binary32).
        let x = ndarray::arr2(&[[1.0f32, 2.0], [1e19, 0.0], [2e19, 0.0]]);
        assert_eq!(first_oversized_row(x.view()).map(|(i, _)| i), Some(1));
        let ok = ndarray::arr2(&[[1e18f32, 1e18]]);
        assert_eq!(first_oversized_row(ok.view()), None);
    }
}
