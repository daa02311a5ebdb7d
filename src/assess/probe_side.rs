//! How a method reaches the probes. Most methods add rows and leave the probes alone; two add
//! none and change the probe instead: `reweight` (balanced row weights for the linear probe,
//! a vote divided by class size for k-NN) and `logit-adjust` (the linear probe's scores
//! shifted by −τ·log prior). Both run through the same folds as every method, so their
//! differences against `none` are paired like any other. Neither has a form for the centroid
//! probe: a class mean carries no scores to shift, and balanced weights, constant within a
//! class, leave every mean where it was.

use super::method_id::MethodId;
use crate::augment::{AugmentParams, MethodKind};
use crate::probe::ProbeKind;

/// What a method changes in the probes.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum ProbeSide {
    /// The probes train as usual, on the real and the method's rows.
    Rows,
    /// Balanced class weights (linear) and a vote weighted by 1/n_c (k-NN).
    Reweight,
    /// The baseline's linear fit with its scores shifted by −τ·log π.
    LogitAdjust { tau: f64 },
}

impl ProbeSide {
    pub(super) fn of(method: &MethodId, shared: &AugmentParams) -> Self {
        match method.kind() {
            Some(MethodKind::Reweight) => ProbeSide::Reweight,
            Some(MethodKind::LogitAdjust) => ProbeSide::LogitAdjust { tau: shared.tau },
            _ => ProbeSide::Rows,
        }
    }
}

/// Why `method` has no result with `probe`, when it has none: the cell is left empty (null in
/// results.json, blank in the CSV, "—" in the table) rather than filled with the baseline's
/// figures, which would read as a measured "no effect".
pub fn not_applicable(method: &MethodId, probe: ProbeKind) -> Option<&'static str> {
    match (method.kind(), probe) {
        (Some(MethodKind::LogitAdjust), ProbeKind::Knn) => Some(
            "logit-adjust does not apply to the knn probe: a neighbour vote has no class scores to shift by the log prior, so its cells are left empty",
        ),
        (Some(MethodKind::LogitAdjust), ProbeKind::Centroid) => Some(
            "logit-adjust does not apply to the centroid probe: a nearest class mean has no class scores to shift by the log prior, so its cells are left empty",
        ),
        (Some(MethodKind::Reweight), ProbeKind::Centroid) => Some(
            "reweight does not apply to the centroid probe: balanced weights are constant within a class, so they leave every class mean (and every prediction) as it was; its cells are left empty",
        ),
        _ => None,
    }
}
