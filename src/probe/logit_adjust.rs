//! Post-hoc logit adjustment (Menon et al. 2021, "Long-tail learning via logit adjustment"):
//! a fitted linear probe's class scores `z_c` become `z_c − τ · log π_c`, with `π_c` the
//! class's share of the training rows. A probe trained on imbalanced rows estimates
//! `p(y | x) ∝ p(x | y) π_y`; removing `log π_y` makes the argmax the one of a balanced prior,
//! which is what balanced accuracy rewards. The fit itself is unchanged.

use ndarray::{Array2, Axis};

use crate::data::Rows;

use super::linear_model::LinearModel;
use super::softmax_loss::{log_softmax_in_place, lowest_argmax};

/// The per-class shift `−τ · log π_c` of one training set.
#[derive(Debug, Clone, PartialEq)]
pub struct LogitAdjustment {
    shift: Vec<f64>,
}

impl LogitAdjustment {
    /// The shift for training labels `y` (each below `n_classes`) and scale `tau`. A class
    /// with no training rows has `π_c = 0` and `−log 0 = +∞` would make it win everywhere;
    /// it gets no shift instead (its scores stay as low as the fit left them).
    pub fn new(y: &[u32], n_classes: usize, tau: f64) -> Self {
        let mut counts = vec![0usize; n_classes];
        for &c in y {
            if let Some(n) = counts.get_mut(c as usize) {
                *n += 1;
            }
        }
        let n = y.len() as f64;
        let shift = counts
            .into_iter()
            .map(|nc| {
                if nc > 0 {
                    -tau * (nc as f64 / n).ln()
                } else {
                    0.0
                }
            })
            .collect();
        LogitAdjustment { shift }
    }

    /// `−τ · log π_c` per class.
    pub fn shift(&self) -> &[f64] {
        &self.shift
    }

    /// The adjusted scores `W (x − mean)/scale + b − τ log π`, `n × C`.
    pub fn scores<'a>(&self, model: &LinearModel, x: impl Into<Rows<'a>>) -> Array2<f64> {
        let mut z = model.decision_function(x);
        for mut row in z.axis_iter_mut(Axis(0)) {
            row.iter_mut().zip(&self.shift).for_each(|(v, s)| *v += s);
        }
        z
    }

    /// The class of the largest adjusted score (lowest index on exact ties).
    pub fn predict<'a>(&self, model: &LinearModel, x: impl Into<Rows<'a>>) -> Vec<u32> {
        self.scores(model, x)
            .axis_iter(Axis(0))
            .map(lowest_argmax)
            .collect()
    }

    /// The softmax of the adjusted scores (what log loss and ECE are computed on).
    pub fn predict_proba<'a>(&self, model: &LinearModel, x: impl Into<Rows<'a>>) -> Array2<f64> {
        let mut z = self.scores(model, x);
        for mut row in z.axis_iter_mut(Axis(0)) {
            log_softmax_in_place(row.view_mut());
            row.mapv_inplace(f64::exp);
        }
        z
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::{Array1, array};

    fn model(weights: Array2<f64>, bias: Array1<f64>) -> LinearModel {
        let d = weights.ncols();
        LinearModel {
            weights,
            bias,
            mean: Array1::zeros(d),
            scale: Array1::ones(d),
            converged: true,
            iterations: 0,
            evaluations: 0,
            exact_evaluations: 0,
            final_loss: 0.0,
        }
    }

    #[test]
    fn worked_example_moves_the_decision_to_the_rare_class() {
        // Worked example from Menon et al. 2021's adjusted argmax f_c(x) − τ log π_c:
        // 8 training rows, classes 0 ×6, 1 ×2 (class 2 absent): π = (3/4, 1/4).
        // One feature, W = (1, 0, 0)ᵀ, b = (0, 0.5, −5): at x = 1 the scores are (1, 0.5, −5)
        // and class 0 wins; the shifts are −log 3/4 = 0.2877 and −log 1/4 = 1.3863, so the
        // adjusted scores are (1.2877, 1.8863, −5) and class 1 wins. τ = 0 changes nothing;
        // with τ = 0.2 the shifts are 0.0575 and 0.2773, scores (1.0575, 0.7773) → class 0.
        let y = [0, 0, 0, 0, 0, 0, 1, 1];
        let m = model(array![[1.0], [0.0], [0.0]], array![0.0, 0.5, -5.0]);
        let x = array![[1.0f32]];
        let adj = LogitAdjustment::new(&y, 3, 1.0);
        let s = adj.shift();
        assert!((s[0] - 0.287_682_072_451_780_9).abs() < 1e-12);
        assert!((s[1] - 1.386_294_361_119_890_6).abs() < 1e-12);
        assert_eq!(s[2], 0.0);
        assert_eq!(m.predict(x.view()), vec![0]);
        assert_eq!(adj.predict(&m, x.view()), vec![1]);
        assert_eq!(
            LogitAdjustment::new(&y, 3, 0.0).predict(&m, x.view()),
            vec![0]
        );
        assert_eq!(
            LogitAdjustment::new(&y, 3, 0.2).predict(&m, x.view()),
            vec![0]
        );
        // Probabilities are the softmax of the adjusted scores: p₁/p₀ = e^(1.8863 − 1.2877) = e^(ln 3 − 0.5).
        let p = adj.predict_proba(&m, x.view());
        assert!((p.row(0).sum() - 1.0).abs() < 1e-12);
        let ratio = p[[0, 1]] / p[[0, 0]];
        assert!((ratio - (3f64.ln() - 0.5).exp()).abs() < 1e-9, "{ratio}");
    }
}
