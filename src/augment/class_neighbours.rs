//! The same-class neighbour lists that interpolate and extrapolate share: for every real row of
//! a class, its K nearest other rows of that class (exact search, or the approximate k-d tree
//! when asked for), and the draw of a
//! (base row, partner) pair that both methods start from.

use ndarray::{Array2, ArrayView1, Axis};
use rand::Rng as _;

use super::FitNote;
use super::class_fit::ClassFit;
use crate::data::Dataset;
use crate::error::Result;
use crate::neighbors::{IndexKind, Knn, Metric, knn_within_with};
use crate::seed::Rng;

/// One class's rows and their neighbour lists.
pub(super) struct ClassNeighbours {
    /// Train row index of each class row.
    rows: Vec<usize>,
    /// The class rows, in `rows` order.
    x: Array2<f32>,
    /// Neighbours within `x` (local indices), K per row, never the row itself.
    knn: Knn,
}

/// A drawn pair: the base row and one of its K neighbours.
pub(super) struct Pair<'a> {
    pub parent: usize,
    pub partner: usize,
    pub x: ArrayView1<'a, f32>,
    pub n: ArrayView1<'a, f32>,
}

impl ClassNeighbours {
    /// Neighbour lists for the class rows `rows` of `train`. A one-row class has no
    /// neighbour and is skipped; K is reduced to `rows - 1` when the class is that small.
    pub(super) fn fit(
        train: &Dataset,
        class: u32,
        rows: &[usize],
        k: usize,
        metric: Metric,
        index: IndexKind,
    ) -> Result<ClassFit<Self>> {
        let m = rows.len();
        if m < 2 {
            return Ok(ClassFit::Skip(
                "only one training row, so no same-class neighbour".into(),
            ));
        }
        let used = k.min(m - 1);
        let note = (used < k).then_some(FitNote::Clamped { class, k: used });
        let x = train.x.select(Axis(0), rows);
        let knn = knn_within_with(index, x.view(), used, metric);
        if knn.k == 0 || knn.n_queries() != m {
            return Ok(ClassFit::Skip(
                "the neighbour search returned no neighbours".into(),
            ));
        }
        Ok(ClassFit::Ready {
            model: ClassNeighbours {
                rows: rows.to_vec(),
                x,
                knn,
            },
            note,
        })
    }

    /// A base row uniform over the class and a partner uniform among its K neighbours.
    /// Draw order (base, then partner) is fixed, so a seed always gives the same pairs.
    pub(super) fn draw(&self, rng: &mut Rng) -> Pair<'_> {
        let base = rng.gen_range(0..self.rows.len());
        let j = rng.gen_range(0..self.knn.k);
        let other = self.knn.row(base).0[j] as usize;
        Pair {
            parent: self.rows[base],
            partner: self.rows[other],
            x: self.x.row(base),
            n: self.x.row(other),
        }
    }

    pub(super) fn dims(&self) -> usize {
        self.x.ncols()
    }
}
