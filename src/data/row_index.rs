//! Exact row lookup without copying rows: rows are indexed by a 64-bit fingerprint of their
//! bits, and a fingerprint hit is confirmed by comparing the rows bit for bit. Used to count
//! duplicate rows and to catch synthetic rows that copy held-out ones.

use std::collections::HashMap;
use std::hash::Hasher;

use ndarray::ArrayView1;

use super::Rows;

/// The rows of a matrix, indexed for exact (bitwise) lookup.
pub struct RowIndex<'a> {
    x: Rows<'a>,
    by_print: HashMap<u64, Vec<usize>>,
}

impl<'a> RowIndex<'a> {
    /// Indexes every row of `x` by a fingerprint of its bits (one pass).
    /// `x` may be picked rows of a larger matrix ([`Rows`]); they are indexed in place.
    pub fn new(x: impl Into<Rows<'a>>) -> Self {
        let x = x.into();
        let mut by_print: HashMap<u64, Vec<usize>> = HashMap::with_capacity(x.nrows());
        for (i, r) in x.iter().enumerate() {
            by_print.entry(fingerprint(r)).or_default().push(i);
        }
        RowIndex { x, by_print }
    }

    /// Whether some row is bit-identical to `row`.
    pub fn contains(&self, row: ArrayView1<f32>) -> bool {
        self.by_print
            .get(&fingerprint(row))
            .is_some_and(|c| c.iter().any(|&i| same_bits(self.x.row(i), row)))
    }

    /// Rows that repeat an earlier row bit for bit.
    pub fn duplicates(&self) -> usize {
        self.by_print
            .values()
            .map(|rows| {
                // Within one fingerprint, count rows equal to an earlier row of the bucket.
                (0..rows.len())
                    .filter(|&j| {
                        (0..j).any(|i| same_bits(self.x.row(rows[i]), self.x.row(rows[j])))
                    })
                    .count()
            })
            .sum()
    }
}

fn fingerprint(r: ArrayView1<f32>) -> u64 {
    let mut h = std::collections::hash_map::DefaultHasher::new();
    for v in r.iter() {
        h.write_u32(v.to_bits());
    }
    h.finish()
}

fn same_bits(a: ArrayView1<f32>, b: ArrayView1<f32>) -> bool {
    a.len() == b.len()
        && a.iter()
            .zip(b.iter())
            .all(|(x, y)| x.to_bits() == y.to_bits())
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    #[test]
    fn lookup_and_duplicates_are_bitwise() {
        // common practice, no source: 0.0 and -0.0 differ in their bits, so they are not duplicates.
        let x = array![
            [1.0f32, 2.0],
            [0.0, 1.0],
            [1.0, 2.0],
            [-0.0, 1.0],
            [1.0, 2.0]
        ];
        let idx = RowIndex::new(x.view());
        assert_eq!(idx.duplicates(), 2);
        assert!(idx.contains(array![0.0f32, 1.0].view()));
        assert!(!idx.contains(array![0.0f32, 1.5].view()));
    }
}
