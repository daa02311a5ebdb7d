//! A bounded "best so far" list for one query: at most `cap` (score, index) pairs kept in
//! ascending order, lower score first and lower index first among equal scores.
//!
//! Candidates arrive by the million while the list stays short (k plus a small margin), so
//! an insertion into a sorted `Vec` beats a heap: the common case is one comparison against
//! the current worst entry, and an accepted candidate costs a binary search and a short
//! `memmove`. Nothing is allocated after construction.

/// Bounded ascending list of the `cap` lowest (score, index) pairs seen.
#[derive(Debug, Clone)]
pub(crate) struct TopK {
    cap: usize,
    items: Vec<(f32, u32)>,
}

impl TopK {
    pub(crate) fn new(cap: usize) -> TopK {
        TopK {
            cap,
            items: Vec::with_capacity(cap + 1),
        }
    }

    /// Score a candidate must beat (strictly) to enter once the list is full; +∞ before.
    #[inline(always)]
    pub(crate) fn threshold(&self) -> f32 {
        if self.items.len() < self.cap {
            f32::INFINITY
        } else {
            self.items.last().map_or(f32::INFINITY, |e| e.0)
        }
    }

    /// Whether `cap` entries are held.
    pub(crate) fn is_full(&self) -> bool {
        self.items.len() >= self.cap
    }

    /// Offer a candidate. NaN scores rank as +∞ (last), so garbage rows never displace real
    /// neighbours but still fill the list when nothing else exists.
    #[inline]
    pub(crate) fn push(&mut self, score: f32, index: u32) {
        if self.cap == 0 {
            return;
        }
        let score = if score.is_nan() { f32::INFINITY } else { score };
        if self.items.len() >= self.cap
            && let Some(&(ws, wi)) = self.items.last()
            && (score > ws || (score == ws && index >= wi))
        {
            return;
        }
        let pos = self
            .items
            .partition_point(|&(s, i)| s < score || (s == score && i < index));
        self.items.insert(pos, (score, index));
        if self.items.len() > self.cap {
            self.items.pop();
        }
    }

    /// The held entries, best first.
    pub(crate) fn as_slice(&self) -> &[(f32, u32)] {
        &self.items
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keeps_lowest_with_index_ties() {
        // Common practice, no source: a bounded top-k equals sort-then-truncate.
        let scores = [5.0, 1.0, 3.0, 1.0, f32::NAN, 0.5, 3.0, 2.0];
        let mut t = TopK::new(4);
        for (i, &s) in scores.iter().enumerate() {
            t.push(s, i as u32);
        }
        assert_eq!(t.as_slice(), &[(0.5, 5), (1.0, 1), (1.0, 3), (2.0, 7)]);
        assert_eq!(t.threshold(), 2.0);
        let mut u = TopK::new(3);
        u.push(f32::NAN, 0);
        assert_eq!(u.as_slice(), &[(f32::INFINITY, 0)]);
        assert_eq!(u.threshold(), f32::INFINITY);
        let mut z = TopK::new(0);
        z.push(1.0, 0);
        assert!(z.as_slice().is_empty());
    }
}
