//! Principal component analysis by a symmetric eigendecomposition (linfa-linalg's `eigh`),
//! on whichever of the covariance (d × d) or Gram (n × n) matrix is smaller. Exact, so the
//! full spectrum is available for "keep 95% of the variance"; the report's 2-D scatter
//! projections use the leading two components of the same decomposition.

use linfa_linalg::eigh::Eigh;
use ndarray::{Array1, Array2, ArrayView2, Axis, s};

use crate::error::{Error, Result};

/// Directions whose variance is at most this share of the total are numerical noise (a rank
/// deficient matrix still yields tiny nonzero eigenvalues), so they are dropped.
const NEGLIGIBLE_SHARE: f64 = 1e-12;

/// Rows converted to f64 at a time in [`Pca::transform`], to bound the temporary memory.
const TRANSFORM_CHUNK: usize = 4096;

/// A fitted PCA. Variances use the n − 1 denominator (as numpy's `cov` and scikit-learn).
#[derive(Debug, Clone)]
pub struct Pca {
    /// Column means the components were fitted around.
    pub mean: Array1<f64>,
    /// One principal direction per row (unit length), by decreasing variance.
    pub components: Array2<f64>,
    /// Variance along each direction.
    pub explained_variance: Array1<f64>,
    /// Share of the total variance along each direction.
    pub explained_variance_ratio: Array1<f64>,
}

impl Pca {
    /// Peak bytes of [`Pca::fit`] on `rows × dims`, for the memory estimate checked before
    /// any work: the centred f64 copy, the m × m matrix decomposed (m the smaller side) with
    /// its eigenvectors and the solver's workspace, and the directions and kept components
    /// (m × d each).
    pub fn fit_peak_bytes(rows: usize, dims: usize) -> u64 {
        let (n, d) = (rows as u64, dims as u64);
        let m = n.min(d);
        (n * d + 3 * m * m + 2 * m * d).saturating_mul(8)
    }

    /// Fit on the rows of `x` (n ≥ 2). Keeps every direction with non-negligible variance.
    ///
    /// Each direction's sign is fixed so that its largest-magnitude entry is positive, which
    /// makes the result independent of which matrix was decomposed.
    pub fn fit(x: ArrayView2<f32>) -> Result<Pca> {
        let (n, d) = x.dim();
        if n < 2 {
            return Err(Error::data(
                format!("PCA needs at least 2 rows, got {n}"),
                "supply more rows (a class with a single row has no spread to analyse)",
            ));
        }
        if let Some(pos) = x.iter().position(|v| !v.is_finite()) {
            return Err(Error::data(
                format!(
                    "PCA input has a non-finite value at row {}, column {}",
                    pos / d.max(1),
                    pos % d.max(1)
                ),
                "remove or repair rows containing NaN or infinity",
            ));
        }
        let xf = x.mapv(f64::from);
        let mean = xf.mean_axis(Axis(0)).unwrap_or_else(|| Array1::zeros(d));
        let centred = xf - &mean;
        let denom = (n - 1) as f64;
        let total: f64 = centred.iter().map(|v| v * v).sum::<f64>() / denom;

        // (variance, direction) pairs, unsorted.
        let (values, directions) = if d <= n {
            let cov = centred.t().dot(&centred) / denom;
            let (vals, vecs) = cov.eigh().map_err(eig_error)?;
            // Eigenvectors are the columns of `vecs`; store them as rows.
            (vals, vecs.reversed_axes())
        } else {
            let gram = centred.dot(&centred.t()) / denom;
            let (vals, vecs) = gram.eigh().map_err(eig_error)?;
            // v = Xᵀu / sqrt(λ (n − 1)); computed for all, the negligible ones dropped below.
            let mut dirs = vecs.t().dot(&centred);
            for (mut row, &lam) in dirs.outer_iter_mut().zip(vals.iter()) {
                let scale = (lam.max(0.0) * denom).sqrt();
                if scale > 0.0 {
                    row /= scale;
                }
            }
            (vals, dirs)
        };

        let mut order: Vec<usize> = (0..values.len()).collect();
        order.sort_by(|&a, &b| values[b].total_cmp(&values[a]).then(a.cmp(&b)));
        let cutoff = NEGLIGIBLE_SHARE * total;
        let keep: Vec<usize> = order
            .into_iter()
            .filter(|&i| values[i] > cutoff && values[i].is_finite())
            .take((n - 1).min(d))
            .collect();

        let mut components = Array2::zeros((keep.len(), d));
        let mut explained_variance = Array1::zeros(keep.len());
        for (out, &i) in keep.iter().enumerate() {
            let mut row = directions.row(i).to_owned();
            // Re-normalise: the Gram recovery is unit length only up to rounding.
            let norm = row.dot(&row).sqrt();
            if norm > 0.0 {
                row /= norm;
            }
            let pivot = row
                .iter()
                .copied()
                .fold(0.0f64, |m, v| if v.abs() > m.abs() { v } else { m });
            if pivot < 0.0 {
                row.mapv_inplace(|v| -v);
            }
            components.row_mut(out).assign(&row);
            explained_variance[out] = values[i];
        }
        let explained_variance_ratio = if total > 0.0 {
            &explained_variance / total
        } else {
            Array1::zeros(keep.len())
        };
        Ok(Pca {
            mean,
            components,
            explained_variance,
            explained_variance_ratio,
        })
    }

    /// The smallest number of leading components whose ratios sum to at least `frac`.
    /// If the kept components never reach `frac` (e.g. `frac` = 1 with rounding), all of
    /// them.
    pub fn components_for(&self, frac: f64) -> usize {
        let mut acc = 0.0;
        for (i, r) in self.explained_variance_ratio.iter().enumerate() {
            if acc >= frac {
                return i;
            }
            acc += r;
        }
        self.explained_variance_ratio.len()
    }

    /// Number of directions kept by [`Pca::fit`].
    pub fn n_components(&self) -> usize {
        self.components.nrows()
    }

    /// Project rows onto the first `k` components (centred). `k` is clamped to the number of
    /// components; `x` must have as many columns as the fitted data (callers validate).
    pub fn transform(&self, x: ArrayView2<f32>, k: usize) -> Array2<f32> {
        let k = k.min(self.components.nrows());
        let basis = self.components.slice(s![..k, ..]);
        let mut out = Array2::zeros((x.nrows(), k));
        for (chunk, mut dest) in x
            .axis_chunks_iter(Axis(0), TRANSFORM_CHUNK)
            .zip(out.axis_chunks_iter_mut(Axis(0), TRANSFORM_CHUNK))
        {
            let centred = chunk.mapv(f64::from) - &self.mean;
            let proj = centred.dot(&basis.t());
            dest.zip_mut_with(&proj, |o, &p| *o = p as f32);
        }
        out
    }
}

fn eig_error(e: linfa_linalg::LinalgError) -> Error {
    Error::data(
        format!("PCA eigendecomposition failed: {e}"),
        "check the rows for extreme magnitudes; rescale the embeddings if needed",
    )
}
