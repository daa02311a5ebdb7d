//! Sharing neighbour work across methods within a fold: test-to-real distances are computed
//! once, and each method only adds test-to-synthetic distances, merged into the real top-k.

use crate::neighbors::Knn;

/// Merge two top-k lists for the same queries into the top-k over the union, where `b`'s
/// indices are shifted by `offset` (the synthetic rows follow the real rows). Ties keep the
/// lower combined index, so the result equals a search over the concatenated base.
pub fn merge(a: &Knn, b: &Knn, offset: u32, k: usize) -> Knn {
    let n = a.n_queries().max(b.n_queries());
    let mut indices = Vec::with_capacity(n * k);
    let mut distances = Vec::with_capacity(n * k);
    let mut k_out = k.min(a.k + b.k);
    if n == 0 {
        k_out = 0;
    }
    for q in 0..n {
        let (ai, ad) = if a.k > 0 {
            a.row(q)
        } else {
            (&[][..], &[][..])
        };
        let (bi, bd) = if b.k > 0 {
            b.row(q)
        } else {
            (&[][..], &[][..])
        };
        let (mut i, mut j) = (0, 0);
        while indices.len() < (q + 1) * k_out {
            let take_a = match (ai.get(i), bi.get(j)) {
                (Some(_), None) => true,
                (None, Some(_)) => false,
                (Some(&x), Some(&y)) => ad[i] < bd[j] || (ad[i] == bd[j] && x < y + offset),
                (None, None) => break,
            };
            if take_a {
                indices.push(ai[i]);
                distances.push(ad[i]);
                i += 1;
            } else {
                indices.push(bi[j] + offset);
                distances.push(bd[j]);
                j += 1;
            }
        }
    }
    Knn {
        k: k_out,
        indices,
        distances,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn merge_keeps_order_and_lower_index_on_ties() {
        // common practice, no source: merging sorted lists equals sorting their union.
        let a = Knn {
            k: 2,
            indices: vec![0, 3],
            distances: vec![0.1, 0.5],
        };
        let b = Knn {
            k: 2,
            indices: vec![1, 0],
            distances: vec![0.1, 0.2],
        };
        let m = merge(&a, &b, 10, 3);
        assert_eq!(m.indices, vec![0, 11, 10]);
        assert_eq!(m.distances, vec![0.1, 0.1, 0.2]);
    }
}
