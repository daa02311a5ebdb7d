//! A fitted multinomial logistic regression.

use ndarray::{Array1, Array2, ArrayView1, ArrayView2, Axis};

use super::scaling;
use super::softmax_loss::{log_softmax_in_place, lowest_argmax};
use crate::data::Rows;

/// Weights and biases in standardised coordinates, with the column transform they expect and
/// a record of how the fit ended.
#[derive(Debug, Clone, PartialEq)]
pub struct LinearModel {
    pub(crate) weights: Array2<f64>,
    pub(crate) bias: Array1<f64>,
    pub(crate) mean: Array1<f64>,
    pub(crate) scale: Array1<f64>,
    /// Whether L-BFGS met the gradient tolerance (callers warn when it did not).
    pub converged: bool,
    /// L-BFGS iterations taken.
    pub iterations: usize,
    /// Objective-and-gradient evaluations in all (line-search trials included).
    pub evaluations: usize,
    /// Of those, the evaluations on f64 logits that finish the fit (after the f32 phase).
    pub exact_evaluations: usize,
    /// The objective (weighted mean cross-entropy + λ/2‖W‖²) at the returned weights.
    pub final_loss: f64,
}

impl LinearModel {
    /// `C × d` weights acting on standardised rows `(x − mean) / scale`.
    pub fn weights(&self) -> ArrayView2<'_, f64> {
        self.weights.view()
    }

    /// One bias per class.
    pub fn bias(&self) -> ArrayView1<'_, f64> {
        self.bias.view()
    }

    /// Column means subtracted before the weights apply (zeros without standardisation).
    pub fn mean(&self) -> ArrayView1<'_, f64> {
        self.mean.view()
    }

    /// Column scales divided out before the weights apply (ones without standardisation).
    pub fn scale(&self) -> ArrayView1<'_, f64> {
        self.scale.view()
    }

    /// Number of classes (rows of the weight matrix).
    pub fn n_classes(&self) -> usize {
        self.weights.nrows()
    }

    /// Embedding width (columns of the weight matrix).
    pub fn dims(&self) -> usize {
        self.weights.ncols()
    }

    /// Class scores `W (x − mean)/scale + b`, `n × C`.
    ///
    /// # Panics
    /// If `x.ncols() != self.dims()`: rows must come from the matrix the model was fitted on.
    pub fn decision_function<'a>(&self, x: impl Into<Rows<'a>>) -> Array2<f64> {
        let x = x.into();
        assert_eq!(
            x.ncols(),
            self.dims(),
            "rows have {} columns but the linear probe was fitted on {}",
            x.ncols(),
            self.dims()
        );
        let xs = scaling::apply(x, self.mean.view(), self.scale.view());
        let mut z = xs.dot(&self.weights.t());
        z += &self.bias;
        z
    }

    /// Class probabilities (softmax of the scores, shifted by the row maximum so it never
    /// overflows), `n × C`, rows summing to 1.
    pub fn predict_proba<'a>(&self, x: impl Into<Rows<'a>>) -> Array2<f64> {
        let mut z = self.decision_function(x);
        for row in z.axis_iter_mut(Axis(0)) {
            let mut row = row;
            log_softmax_in_place(row.view_mut());
            row.mapv_inplace(f64::exp);
        }
        z
    }

    /// Most probable class per row (argmax of the scores; lowest class index on exact ties).
    pub fn predict<'a>(&self, x: impl Into<Rows<'a>>) -> Vec<u32> {
        self.decision_function(x)
            .axis_iter(Axis(0))
            .map(lowest_argmax)
            .collect()
    }
}
