//! Some rows of a matrix, reached through their indices instead of copied out. A fold's
//! training and test rows are row lists into the one input matrix: copying them for every
//! fold held the data twice at the peak, so the stages that read them (neighbour search,
//! probes, diagnostics) take a `Rows` and read its rows in place, a row at a time or into
//! the block buffers they already fill.

use ndarray::{Array2, ArrayView1, ArrayView2, Axis};

/// Rows `pick[0], pick[1], ..` of `x` (all of `x`, in order, without a pick), seen as a
/// matrix of `pick.len()` rows.
#[derive(Debug, Clone, Copy)]
pub struct Rows<'a> {
    x: ArrayView2<'a, f32>,
    pick: Option<&'a [usize]>,
}

impl<'a> Rows<'a> {
    /// Every row of `x`, in order.
    pub fn all(x: ArrayView2<'a, f32>) -> Self {
        Rows { x, pick: None }
    }

    /// Rows `pick` of `x`, in that order; every index must be below `x.nrows()` (they come
    /// from a split of `x`'s own rows).
    pub fn picked(x: ArrayView2<'a, f32>, pick: &'a [usize]) -> Self {
        debug_assert!(pick.iter().all(|&i| i < x.nrows()));
        Rows {
            x,
            pick: Some(pick),
        }
    }

    /// The same rows under a shorter lifetime.
    pub fn reborrow<'b>(self) -> Rows<'b>
    where
        'a: 'b,
    {
        Rows {
            x: self.x.reborrow(),
            pick: self.pick,
        }
    }

    /// The first `n` picked rows (all of them when there are fewer).
    pub fn first(self, n: usize) -> Rows<'a> {
        let n = n.min(self.nrows());
        match self.pick {
            None => Rows::all(self.x.slice_move(ndarray::s![..n, ..])),
            Some(p) => Rows::picked(self.x, &p[..n]),
        }
    }

    /// The matrix the rows are taken from, and the pick (`None`: every row in order).
    pub fn source(&self) -> (ArrayView2<'a, f32>, Option<&'a [usize]>) {
        (self.x, self.pick)
    }

    /// Number of picked rows.
    pub fn nrows(&self) -> usize {
        self.pick.map_or(self.x.nrows(), <[usize]>::len)
    }

    /// Width of every row.
    pub fn ncols(&self) -> usize {
        self.x.ncols()
    }

    /// Row `i` of the picked rows.
    pub fn row(&self, i: usize) -> ArrayView1<'a, f32> {
        self.x.index_axis_move(Axis(0), self.index(i))
    }

    /// The row of the underlying matrix that picked row `i` is.
    pub fn index(&self, i: usize) -> usize {
        self.pick.map_or(i, |p| p[i])
    }

    /// The picked rows in order.
    pub fn iter(&self) -> impl Iterator<Item = ArrayView1<'a, f32>> + '_ {
        (0..self.nrows()).map(|i| self.row(i))
    }

    /// The rows as a plain view when they are the whole matrix, in order.
    pub fn as_view(&self) -> Option<ArrayView2<'a, f32>> {
        self.pick.is_none().then_some(self.x)
    }

    /// Picked rows `positions` (indices among the picked rows), copied.
    pub fn select(&self, positions: &[usize]) -> Array2<f32> {
        match self.pick {
            None => self.x.select(Axis(0), positions),
            Some(p) => {
                let rows: Vec<usize> = positions.iter().map(|&i| p[i]).collect();
                self.x.select(Axis(0), &rows)
            }
        }
    }

    /// Every picked row, copied into a standard-layout (row-major) matrix: for the few
    /// stages that need an owned, contiguous one.
    pub fn to_owned(&self) -> Array2<f32> {
        let out = match self.pick {
            None => self.x.to_owned(),
            Some(p) => self.x.select(Axis(0), p),
        };
        if out.is_standard_layout() {
            out
        } else {
            out.as_standard_layout().into_owned()
        }
    }
}

impl<'a> From<ArrayView2<'a, f32>> for Rows<'a> {
    fn from(x: ArrayView2<'a, f32>) -> Self {
        Rows::all(x)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    #[test]
    fn picked_rows_read_as_the_selected_matrix() {
        // common practice, no source: indexing rows equals copying them out.
        let x = array![[0.0f32, 1.0], [2.0, 3.0], [4.0, 5.0], [6.0, 7.0]];
        let pick = [3, 0, 2];
        let rows = Rows::picked(x.view(), &pick);
        let copied = x.select(Axis(0), &pick);
        assert_eq!(rows.nrows(), 3);
        assert_eq!(rows.ncols(), 2);
        assert_eq!(rows.to_owned(), copied);
        for i in 0..3 {
            assert_eq!(rows.row(i), copied.row(i));
        }
        assert_eq!(rows.index(1), 0);
        assert_eq!(rows.select(&[2, 0]), copied.select(Axis(0), &[2, 0]));
        assert!(rows.as_view().is_none());
        let whole = Rows::all(x.view());
        assert_eq!(whole.as_view(), Some(x.view()));
        assert_eq!(whole.iter().count(), 4);
        assert_eq!(rows.first(2).to_owned(), x.select(Axis(0), &[3, 0]));
        assert_eq!(whole.first(9).nrows(), 4);
        // A column-major view still copies out row-major, as the neighbour search reads it.
        let t = x.t().to_owned();
        let back = Rows::all(t.t()).to_owned();
        assert!(back.is_standard_layout());
        assert_eq!(back, x);
    }
}
