//! Facts about a dataset that `inspect` prints and that other commands use to pick defaults
//! (unit-norm detection) or refuse input (non-finite rows).

use serde::Serialize;

use super::Dataset;

/// Rows holding NaN or ±Inf.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct NonFinite {
    /// Number of rows holding NaN or ±Inf.
    pub count: usize,
    /// Index of the first such row, so an error can name it.
    pub first_row: Option<usize>,
}

impl NonFinite {
    /// Scans every row of `x` once.
    pub fn of(x: ndarray::ArrayView2<f32>) -> NonFinite {
        let bad: Vec<usize> = x
            .rows()
            .into_iter()
            .enumerate()
            .filter(|(_, r)| r.iter().any(|v| !v.is_finite()))
            .map(|(i, _)| i)
            .collect();
        NonFinite {
            count: bad.len(),
            first_row: bad.first().copied(),
        }
    }
}

/// Tolerance on |‖x‖ − 1| for calling a matrix unit-norm. f32 rows normalised by common
/// tooling land within ~1e-6 of 1; 1e-3 leaves room for f16 storage (common practice, no source).
pub const UNIT_NORM_TOL: f64 = 1e-3;

/// Summary statistics of a dataset.
#[derive(Debug, Clone, Serialize)]
pub struct DatasetStats {
    /// Number of rows.
    pub rows: usize,
    /// Embedding width.
    pub dims: usize,
    /// Smallest euclidean norm over the finite rows.
    pub norm_min: f64,
    /// Median euclidean norm over the finite rows.
    pub norm_median: f64,
    /// Largest euclidean norm over the finite rows.
    pub norm_max: f64,
    /// Whether every finite row has norm 1 within [`UNIT_NORM_TOL`].
    pub unit_norm: bool,
    /// Rows holding NaN or ±Inf.
    pub nonfinite: NonFinite,
    /// Rows that repeat an earlier row exactly (bit for bit).
    pub duplicate_rows: usize,
}

impl DatasetStats {
    /// Computes every figure in one pass over the rows plus a sort of the norms.
    pub fn of(ds: &Dataset) -> DatasetStats {
        let mut norms: Vec<f64> =
            ds.x.rows()
                .into_iter()
                .filter(|r| r.iter().all(|v| v.is_finite()))
                .map(|r| {
                    r.iter()
                        .map(|&v| f64::from(v) * f64::from(v))
                        .sum::<f64>()
                        .sqrt()
                })
                .collect();
        norms.sort_by(f64::total_cmp);
        let (min, med, max) = if norms.is_empty() {
            (f64::NAN, f64::NAN, f64::NAN)
        } else {
            (norms[0], norms[norms.len() / 2], norms[norms.len() - 1])
        };
        DatasetStats {
            rows: ds.n_rows(),
            dims: ds.dims(),
            norm_min: min,
            norm_median: med,
            norm_max: max,
            unit_norm: !norms.is_empty()
                && (min - 1.0).abs() <= UNIT_NORM_TOL
                && (max - 1.0).abs() <= UNIT_NORM_TOL,
            nonfinite: NonFinite::of(ds.view()),
            duplicate_rows: duplicate_rows(ds),
        }
    }
}

/// Whether every row of `x` has unit euclidean norm within [`UNIT_NORM_TOL`].
pub fn is_unit_norm(x: ndarray::ArrayView2<f32>) -> bool {
    x.nrows() > 0 && first_not_unit_norm(x).is_none()
}

/// The first row of `x` whose euclidean norm is not 1 within [`UNIT_NORM_TOL`], with that
/// norm (taken in f64), for an error that names the row.
pub fn first_not_unit_norm<'a>(x: impl Into<super::Rows<'a>>) -> Option<(usize, f64)> {
    x.into().iter().enumerate().find_map(|(i, r)| {
        let n = r
            .iter()
            .map(|&v| f64::from(v) * f64::from(v))
            .sum::<f64>()
            .sqrt();
        ((n - 1.0).abs() > UNIT_NORM_TOL).then_some((i, n))
    })
}

fn duplicate_rows(ds: &Dataset) -> usize {
    super::RowIndex::new(ds.view()).duplicates()
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    #[test]
    fn stats_on_a_small_matrix() {
        // from memory: norms of (3,4) and (0,1) are 5 and 1.
        let ds = Dataset::new(
            array![[3.0, 4.0], [0.0, 1.0], [3.0, 4.0], [f32::NAN, 0.0]],
            vec![0, 0, 1, 1],
            vec!["a".into(), "b".into()],
        );
        let s = DatasetStats::of(&ds);
        assert_eq!(s.norm_min, 1.0);
        assert_eq!(s.norm_max, 5.0);
        assert!(!s.unit_norm);
        assert_eq!(s.duplicate_rows, 1);
        assert_eq!(
            s.nonfinite,
            NonFinite {
                count: 1,
                first_row: Some(3)
            }
        );
    }
}
