//! Per-column centring and scaling fitted on training rows, so the linear probe's L2 penalty
//! treats every embedding dimension alike whatever its spread.

use ndarray::{Array1, Array2, ArrayView1, Axis};

use crate::data::Rows;

/// Column means and scales of `x` (population standard deviation, in f64). Columns that are
/// constant up to rounding (std ≤ 1e-12 · (|mean| + 1)) get scale 1, so they stay constant
/// instead of being blown up by rounding noise. With `standardize = false` the transform is
/// the identity (mean 0, scale 1).
#[cfg(test)]
pub(crate) fn fit(x: ndarray::ArrayView2<f32>, standardize: bool) -> (Array1<f64>, Array1<f64>) {
    fit_parts(&[x.into()], standardize)
}

/// [`fit`] over row blocks taken in order, as if stacked (same sums, same order), without
/// building the stacked copy.
pub(crate) fn fit_parts(parts: &[Rows<'_>], standardize: bool) -> (Array1<f64>, Array1<f64>) {
    let d = parts.first().map_or(0, |p| p.ncols());
    let rows: usize = parts.iter().map(|p| p.nrows()).sum();
    if !standardize || rows == 0 {
        return (Array1::zeros(d), Array1::ones(d));
    }
    let n = rows as f64;
    let mut mean = Array1::<f64>::zeros(d);
    for row in parts.iter().flat_map(|p| p.iter()) {
        mean.iter_mut()
            .zip(row)
            .for_each(|(m, &v)| *m += f64::from(v));
    }
    mean.mapv_inplace(|m| m / n);
    let mut var = Array1::<f64>::zeros(d);
    for row in parts.iter().flat_map(|p| p.iter()) {
        var.iter_mut()
            .zip(row.iter().zip(&mean))
            .for_each(|(s, (&v, m))| *s += (f64::from(v) - m).powi(2));
    }
    let scale = var
        .iter()
        .zip(&mean)
        .map(|(&s, m)| {
            let sd = (s / n).sqrt();
            if sd > 1e-12 * (m.abs() + 1.0) {
                sd
            } else {
                1.0
            }
        })
        .collect();
    (mean, scale)
}

/// `(x − mean) / scale`, row by row, in f64.
pub(crate) fn apply<'a>(
    x: impl Into<Rows<'a>>,
    mean: ArrayView1<f64>,
    scale: ArrayView1<f64>,
) -> Array2<f64> {
    let x = x.into();
    let mut out = Array2::<f64>::zeros((x.nrows(), x.ncols()));
    for (mut row, src) in out.axis_iter_mut(Axis(0)).zip(x.iter()) {
        row.iter_mut()
            .zip(src.iter().zip(mean.iter().zip(scale)))
            .for_each(|(v, (&x, (m, s)))| *v = (f64::from(x) - m) / s);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    #[test]
    fn standardises_and_leaves_constant_columns_unscaled() {
        // Common practice, no source: column 0 = [1, 3] → mean 2, population std 1;
        // column 1 is constant 0.1 → scale 1 (centred to 0).
        let x = array![[1.0f32, 0.1], [3.0, 0.1]];
        let (mean, scale) = fit(x.view(), true);
        assert!((mean[0] - 2.0).abs() < 1e-12 && (scale[0] - 1.0).abs() < 1e-12);
        assert_eq!(scale[1], 1.0);
        let z = apply(x.view(), mean.view(), scale.view());
        assert!((z[[0, 0]] + 1.0).abs() < 1e-12 && (z[[1, 0]] - 1.0).abs() < 1e-12);
        assert!(z[[0, 1]].abs() < 1e-7);
    }
}
