//! Per-feature centring and scaling for the k-NN probe, fitted on a fold's training rows.
//!
//! Unscaled euclidean (and, through the dot product, cosine) distances are dominated by the
//! features with the largest spread; standardising first gives every feature the same say.
//! The statistics come from the training rows alone, so nothing about the held-out rows
//! reaches the distance the probe uses.

use ndarray::{Array1, Array2};

use super::scaling;
use crate::data::Rows;

/// Column means and scales fitted on training rows, applied to training and test rows alike.
#[derive(Debug, Clone, PartialEq)]
pub struct KnnStandardizer {
    mean: Array1<f64>,
    scale: Array1<f64>,
}

impl KnnStandardizer {
    /// Mean and population standard deviation of every column of `train` (in f64). A column
    /// whose standard deviation is zero up to rounding keeps scale 1 (centred, not scaled),
    /// so rounding noise is not blown up. With no rows the transform is the identity.
    pub fn fit<'a>(train: impl Into<Rows<'a>>) -> Self {
        let (mean, scale) = scaling::fit_parts(&[train.into()], true);
        KnnStandardizer { mean, scale }
    }

    /// The fitted column means.
    pub fn mean(&self) -> &Array1<f64> {
        &self.mean
    }

    /// The fitted column scales (1 for a zero-variance column).
    pub fn scale(&self) -> &Array1<f64> {
        &self.scale
    }

    /// `(x − mean) / scale`, computed in f64 and stored as f32 (the neighbour search's type),
    /// a row at a time: no f64 copy of the rows is made.
    pub fn apply<'a>(&self, x: impl Into<Rows<'a>>) -> Array2<f32> {
        let x = x.into();
        let mut out = Array2::<f32>::zeros((x.nrows(), x.ncols()));
        for (mut dst, src) in out.outer_iter_mut().zip(x.iter()) {
            dst.iter_mut()
                .zip(src.iter().zip(self.mean.iter().zip(&self.scale)))
                .for_each(|(o, (&v, (m, s)))| *o = ((f64::from(v) - m) / s) as f32);
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    #[test]
    fn centres_scales_and_leaves_constant_columns_unscaled() {
        // Common practice, no source: column 0 = [0, 10, 20] → mean 10, population std
        // sqrt(200/3); column 1 constant 5 → scale 1, centred to 0.
        let train = array![[0.0f32, 5.0], [10.0, 5.0], [20.0, 5.0]];
        let s = KnnStandardizer::fit(train.view());
        assert_eq!(s.mean().to_vec(), vec![10.0, 5.0]);
        let sd = (200.0f64 / 3.0).sqrt();
        assert!((s.scale()[0] - sd).abs() < 1e-12);
        assert_eq!(s.scale()[1], 1.0);
        let test = array![[10.0f32 + sd as f32, 7.0]];
        let out = s.apply(test.view());
        assert!((out[[0, 0]] - 1.0).abs() < 1e-6);
        assert_eq!(out[[0, 1]], 2.0);
    }
}
