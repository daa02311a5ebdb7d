//! A matrix operand as a contiguous slice with non-negative strides, the form the packing
//! loops read and the tile stores write.

use ndarray::{ArrayView2, ArrayViewMut2};

/// A read-only matrix: element (i, j) is `data[i * rs + j * cs]`.
#[derive(Clone, Copy)]
pub(super) struct Operand<'a> {
    pub data: &'a [f32],
    pub rows: usize,
    pub cols: usize,
    pub rs: usize,
    pub cs: usize,
}

impl<'a> Operand<'a> {
    /// The view's memory as one slice, if its elements are contiguous in memory (row- or
    /// column-major, including a block of whole rows or columns) with non-negative strides.
    pub fn of(v: &ArrayView2<'a, f32>) -> Option<Operand<'a>> {
        let (rs, cs) = strides(v.strides())?;
        let data = v.to_slice_memory_order()?;
        let (rows, cols) = v.dim();
        Some(Operand {
            data,
            rows,
            cols,
            rs,
            cs,
        })
    }

    /// The same memory read as the transpose.
    pub fn t(self) -> Operand<'a> {
        Operand {
            rows: self.cols,
            cols: self.rows,
            rs: self.cs,
            cs: self.rs,
            ..self
        }
    }
}

/// A writable matrix: element (i, j) is `data[i * rs + j * cs]`.
pub(super) struct OperandMut<'a> {
    pub data: &'a mut [f32],
    pub rows: usize,
    pub cols: usize,
    pub rs: usize,
    pub cs: usize,
}

impl<'a> OperandMut<'a> {
    /// As [`Operand::of`], for the output.
    pub fn of<'b>(v: &'a mut ArrayViewMut2<'b, f32>) -> Option<OperandMut<'a>> {
        let (rs, cs) = strides(v.strides())?;
        let (rows, cols) = v.dim();
        let data = v.as_slice_memory_order_mut()?;
        Some(OperandMut {
            data,
            rows,
            cols,
            rs,
            cs,
        })
    }
}

fn strides(s: &[isize]) -> Option<(usize, usize)> {
    Some((usize::try_from(s[0]).ok()?, usize::try_from(s[1]).ok()?))
}
