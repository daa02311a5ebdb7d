//! Growing every planned class of a training set with one fitted method, in parallel over
//! classes, each class on its own random stream.

use ndarray::Array2;

use super::{Augmenter, FitNote, Plan, Provenance};
use crate::data::Dataset;
use crate::error::Result;

/// Synthetic rows for a whole training set.
#[derive(Debug, Clone)]
pub struct Grown {
    /// Synthetic rows only, grouped by class in class-index order.
    pub x: Array2<f32>,
    pub labels: Vec<u32>,
    /// Indices are rows of the training set the method was fitted on.
    pub provenance: Vec<Provenance>,
    /// Whether rows were renormalised to unit norm.
    pub renormalised: bool,
    pub notes: Vec<FitNote>,
}

/// Fit `method` on `train` and draw `plan.add[c]` rows for every class `c`. The stream for
/// class `c` is `seed::stream(seed, [stream.., c])`. With `unit_norm`, rows are rescaled to norm 1.
pub fn grow(
    train: &Dataset,
    method: &dyn Augmenter,
    plan: &Plan,
    unit_norm: bool,
    seed: u64,
    stream: &[u64],
) -> Result<Grown> {
    let _ = (train, method, plan, unit_norm, seed, stream);
    todo!("augment helper")
}
