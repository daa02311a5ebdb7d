//! Recall of an approximate neighbour list against the exact one.

use super::Knn;

/// Mean over queries of |approx ∩ exact| / exact.k: the share of true neighbours found.
///
/// Compared over the queries both results have; 1.0 when `exact` has no neighbours (there
/// is nothing to miss).
pub fn recall_at_k(approx: &Knn, exact: &Knn) -> f64 {
    let nq = approx.n_queries().min(exact.n_queries());
    if exact.k == 0 || nq == 0 {
        return 1.0;
    }
    let mut a = Vec::with_capacity(approx.k);
    let mut e = Vec::with_capacity(exact.k);
    let mut hits = 0usize;
    for i in 0..nq {
        a.clear();
        a.extend_from_slice(approx.row(i).0);
        a.sort_unstable();
        a.dedup();
        e.clear();
        e.extend_from_slice(exact.row(i).0);
        e.sort_unstable();
        e.dedup();
        let (mut x, mut y) = (0, 0);
        while x < a.len() && y < e.len() {
            match a[x].cmp(&e[y]) {
                std::cmp::Ordering::Less => x += 1,
                std::cmp::Ordering::Greater => y += 1,
                std::cmp::Ordering::Equal => {
                    hits += 1;
                    x += 1;
                    y += 1;
                }
            }
        }
    }
    hits as f64 / (nq * exact.k) as f64
}
