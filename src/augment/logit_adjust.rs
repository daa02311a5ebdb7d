//! `logit-adjust`: no synthetic rows; the linear probe's class scores are shifted at
//! prediction time by `−τ · log π_c`, with `π_c` the class's share of the fold's training
//! rows (post-hoc logit adjustment, Menon et al. 2021, "Long-tail learning via logit
//! adjustment"; τ = 1 is their default). The fit is the baseline's, so only the decision
//! moves towards rare classes. A k-NN vote has no class scores to shift, so the method does
//! not apply to that probe. What it changes lives in `probe::logit_adjust`.

use super::none::NoRows;
use super::params::{AugmentParams, MethodParams, Param, ParamGuard};
use super::{Augmenter, FittedAugmenter, MethodKind};
use crate::data::Subset;
use crate::error::{Error, Result};

/// τ when none is given (Menon et al. 2021 use τ = 1).
pub const DEFAULT_TAU: f64 = 1.0;

/// The checked parameters of `logit-adjust`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LogitAdjustValidParams {
    tau: f64,
}

impl Default for LogitAdjustValidParams {
    fn default() -> Self {
        LogitAdjustValidParams { tau: DEFAULT_TAU }
    }
}

impl LogitAdjustValidParams {
    /// The scale of the shift, `τ ≥ 0` (0 leaves the scores as they are).
    pub fn tau(&self) -> f64 {
        self.tau
    }
}

/// The unchecked parameters of `logit-adjust`.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct LogitAdjustParams(LogitAdjustValidParams);

impl LogitAdjustParams {
    /// τ, the strength of the prior shift: 0 leaves the scores alone, 1 is the Bayes-optimal
    /// shift for a balanced test set (Menon et al. 2021).
    pub fn tau(mut self, tau: f64) -> Self {
        self.0.tau = tau;
        self
    }
}

impl ParamGuard for LogitAdjustParams {
    type Checked = LogitAdjustValidParams;
    type Error = Error;

    fn check_ref(&self) -> Result<&LogitAdjustValidParams> {
        let tau = self.0.tau;
        if tau.is_finite() && tau >= 0.0 {
            Ok(&self.0)
        } else {
            Err(Error::param(
                Param::Tau.name(),
                format!("{tau} is not a finite number >= 0"),
                format!("give a finite tau >= 0, e.g. the default {DEFAULT_TAU}"),
            ))
        }
    }

    fn check(self) -> Result<LogitAdjustValidParams> {
        self.check_ref()?;
        Ok(self.0)
    }
}

impl MethodParams for LogitAdjustParams {
    const READS: &'static [Param] = &[Param::Tau];

    fn from_shared(shared: &AugmentParams) -> Self {
        LogitAdjustParams::default().tau(shared.tau)
    }
}

impl Augmenter for LogitAdjustValidParams {
    fn kind(&self) -> MethodKind {
        MethodKind::LogitAdjust
    }

    /// No rows: the shift is applied to the probe's scores.
    fn fit(&self, train: &Subset<'_>, _classes: &[u32]) -> Result<Box<dyn FittedAugmenter>> {
        Ok(Box::new(NoRows { dims: train.dims() }))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tau_must_be_finite_and_not_negative() {
        // Common practice, no source: τ scales a shift; a negative or non-finite one is an error.
        assert!(LogitAdjustParams::default().check().is_ok());
        assert!(LogitAdjustParams::default().tau(0.0).check().is_ok());
        for bad in [-0.5, f64::NAN, f64::INFINITY] {
            let e = LogitAdjustParams::default().tau(bad).check().unwrap_err();
            assert!(e.to_string().contains("tau"), "{e}");
        }
    }
}
