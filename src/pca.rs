//! Principal component analysis by a symmetric eigendecomposition (linfa-linalg's `eigh`),
//! on whichever of the covariance (d × d) or Gram (n × n) matrix is smaller. Exact, so the
//! full spectrum is available for "keep 95% of the variance"; linfa-reduction's iterative
//! truncated SVD is kept for the 2-D report projections.

use ndarray::{Array1, Array2, ArrayView2};

use crate::error::Result;

/// A fitted PCA. Variances use the n − 1 denominator (as numpy's `cov` and scikit-learn).
#[derive(Debug, Clone)]
pub struct Pca {
    pub mean: Array1<f64>,
    /// One principal direction per row (unit length), by decreasing variance.
    pub components: Array2<f64>,
    /// Variance along each direction.
    pub explained_variance: Array1<f64>,
    /// Share of the total variance along each direction.
    pub explained_variance_ratio: Array1<f64>,
}

impl Pca {
    /// Fit on the rows of `x` (n ≥ 2). Keeps every direction with non-negligible variance.
    pub fn fit(x: ArrayView2<f32>) -> Result<Pca> {
        let _ = x;
        todo!("neighbors/pca helper")
    }

    /// The smallest number of leading components whose ratios sum to at least `frac`.
    pub fn components_for(&self, frac: f64) -> usize {
        let _ = frac;
        todo!("neighbors/pca helper")
    }

    /// Project rows onto the first `k` components (centred).
    pub fn transform(&self, x: ArrayView2<f32>, k: usize) -> Array2<f32> {
        let _ = (x, k);
        todo!("neighbors/pca helper")
    }
}
