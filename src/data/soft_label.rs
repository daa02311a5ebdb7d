//! Soft targets of synthetic rows that mix two classes (`mix`). A row's hard label stays its
//! dominant class; the soft part names the second class and how the target splits, so every
//! stage that only knows hard labels keeps working and the probes that can use the split read
//! it beside the labels.

use serde::Serialize;

/// The target `weight·e(label) + (1 − weight)·e(partner)` of one row whose hard label is
/// `label` (kept by the caller beside this value).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SoftLabel {
    /// The class the rest of the target goes to.
    pub partner: u32,
    /// The share of the row's own (dominant) label, in [0, 1].
    pub weight: f32,
}

/// Per-row soft parts aligned with a set of rows, or empty when every row is hard (the usual
/// case, which then costs nothing).
pub type SoftLabels = Vec<Option<SoftLabel>>;

/// Appends `more` (soft parts of `more_rows` rows, empty when all hard) to `into` (soft parts
/// of `rows` rows, empty when all hard), keeping the "empty means all hard" form.
pub fn append_soft(
    into: &mut SoftLabels,
    rows: usize,
    more: &[Option<SoftLabel>],
    more_rows: usize,
) {
    if more.is_empty() {
        if !into.is_empty() {
            into.resize(rows + more_rows, None);
        }
        return;
    }
    into.resize(rows, None);
    into.extend_from_slice(more);
}

/// The soft parts of `hard_rows` hard rows followed by rows with parts `more` (empty when all
/// hard): what a probe that trains on real rows then synthetic rows reads.
pub fn after_hard(hard_rows: usize, more: &[Option<SoftLabel>], more_rows: usize) -> SoftLabels {
    let mut out = SoftLabels::new();
    append_soft(&mut out, hard_rows, more, more_rows);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn append_keeps_empty_for_all_hard_and_aligns_otherwise() {
        // Common practice, no source: the representation's own contract.
        let s = SoftLabel {
            partner: 2,
            weight: 0.75,
        };
        assert!(after_hard(3, &[], 4).is_empty());
        let v = after_hard(2, &[None, Some(s)], 2);
        assert_eq!(v, vec![None, None, None, Some(s)]);
        let mut w = v.clone();
        append_soft(&mut w, 4, &[], 3);
        assert_eq!(w.len(), 7);
        assert_eq!(w[3], Some(s));
    }
}
