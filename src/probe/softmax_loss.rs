//! The objective of the linear probe: weighted mean multinomial cross-entropy plus an L2
//! penalty on the weights (not the biases), with its gradient.

use ndarray::{Array2, ArrayView1, ArrayView2, ArrayViewMut1, Axis};

/// `L(W, b) = Σᵢ cᵢ ℓᵢ + λ/2 ‖W‖²` where `ℓᵢ = logsumexp(zᵢ) − zᵢ,yᵢ`, `zᵢ = W xᵢ + b`, and
/// `cᵢ = wᵢ / n` (the class weight of row i over the row count).
///
/// Parameters are packed `[W row-major (C × d), b (C)]`.
pub(crate) struct SoftmaxLoss<'a> {
    x: ArrayView2<'a, f64>,
    y: &'a [u32],
    coef: Vec<f64>,
    n_classes: usize,
    l2: f64,
}

impl<'a> SoftmaxLoss<'a> {
    /// `class_weight[c]` weighs every row of class c; the caller guarantees `y[i] < n_classes`
    /// and `y.len() == x.nrows()`.
    pub(crate) fn new(
        x: ArrayView2<'a, f64>,
        y: &'a [u32],
        class_weight: &[f64],
        n_classes: usize,
        l2: f64,
    ) -> Self {
        let n = y.len().max(1) as f64;
        let coef = y.iter().map(|&c| class_weight[c as usize] / n).collect();
        SoftmaxLoss {
            x,
            y,
            coef,
            n_classes,
            l2,
        }
    }

    pub(crate) fn n_params(&self) -> usize {
        self.n_classes * self.x.ncols() + self.n_classes
    }

    /// The objective at `theta`, with its gradient written into `grad`.
    pub(crate) fn value_and_gradient(&self, theta: &[f64], grad: &mut [f64]) -> f64 {
        let (c, d) = (self.n_classes, self.x.ncols());
        let (w_flat, b) = theta.split_at(c * d);
        let w = ArrayView2::from_shape((c, d), w_flat).expect("packed weights match C × d");
        let mut z: Array2<f64> = self.x.dot(&w.t());
        let mut data_loss = 0.0;
        for ((mut row, &yi), &ci) in z.axis_iter_mut(Axis(0)).zip(self.y).zip(&self.coef) {
            row.iter_mut().zip(b).for_each(|(v, bc)| *v += bc);
            // After this the row holds log-probabilities: ℓᵢ = logsumexp(zᵢ) − zᵢ,yᵢ = −log pᵢ,yᵢ.
            log_softmax_in_place(row.view_mut());
            data_loss -= ci * row[yi as usize];
            // Gradient of cᵢ ℓᵢ with respect to zᵢ: cᵢ (pᵢ − onehot(yᵢ)).
            row.mapv_inplace(|lp| ci * lp.exp());
            row[yi as usize] -= ci;
        }
        let (g_w, g_b) = grad.split_at_mut(c * d);
        let mut g_w = ndarray::ArrayViewMut2::from_shape((c, d), g_w).expect("C × d");
        g_w.assign(&z.t().dot(&self.x));
        g_w.zip_mut_with(&w, |g, &wv| *g += self.l2 * wv);
        g_b.iter_mut()
            .zip(z.sum_axis(Axis(0)))
            .for_each(|(g, s)| *g = s);
        let penalty = 0.5 * self.l2 * w.iter().map(|v| v * v).sum::<f64>();
        data_loss + penalty
    }
}

/// Replaces `z` by `log softmax(z)` (shifted by the maximum, so exp never overflows) and
/// returns `logsumexp(z)`.
pub(crate) fn log_softmax_in_place(mut z: ArrayViewMut1<f64>) -> f64 {
    let max = z.fold(f64::NEG_INFINITY, |m, &v| m.max(v));
    let sum: f64 = z.iter().map(|v| (v - max).exp()).sum();
    let lse = max + sum.ln();
    z.mapv_inplace(|v| v - lse);
    lse
}

/// Index of the largest entry, lowest index among exact ties.
pub(crate) fn lowest_argmax(z: ArrayView1<f64>) -> u32 {
    let mut best = 0usize;
    for (c, &v) in z.iter().enumerate().skip(1) {
        if v > z[best] {
            best = c;
        }
    }
    best as u32
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    fn problem() -> (Array2<f64>, Vec<u32>) {
        let x = array![
            [0.5, -1.0, 2.0],
            [1.5, 0.3, -0.7],
            [-0.2, 0.8, 0.1],
            [0.9, -0.4, -1.1],
            [-1.3, 0.2, 0.6]
        ];
        (x, vec![0, 2, 1, 2, 0])
    }

    #[test]
    fn gradient_matches_finite_differences() {
        // Common practice, no source: central differences, step 1e-6, on unequal class
        // weights and a non-zero L2 penalty.
        let (x, y) = problem();
        let loss = SoftmaxLoss::new(x.view(), &y, &[0.7, 1.9, 1.1], 3, 0.3);
        let theta: Vec<f64> = (0..loss.n_params())
            .map(|i| ((i * 7 % 11) as f64 - 5.0) / 7.0)
            .collect();
        let mut grad = vec![0.0; theta.len()];
        loss.value_and_gradient(&theta, &mut grad);
        let mut scratch = vec![0.0; theta.len()];
        for i in 0..theta.len() {
            let h = 1e-6;
            let mut tp = theta.clone();
            tp[i] += h;
            let mut tm = theta.clone();
            tm[i] -= h;
            let fd = (loss.value_and_gradient(&tp, &mut scratch)
                - loss.value_and_gradient(&tm, &mut scratch))
                / (2.0 * h);
            assert!(
                (fd - grad[i]).abs() < 1e-7,
                "param {i}: fd {fd} vs {}",
                grad[i]
            );
        }
    }

    #[test]
    fn zero_parameters_give_log_c() {
        // Common practice, no source: with W = 0, b = 0 every class has probability 1/C, so the
        // unweighted mean cross-entropy is ln C.
        let (x, y) = problem();
        let loss = SoftmaxLoss::new(x.view(), &y, &[1.0; 3], 3, 0.5);
        let mut g = vec![0.0; loss.n_params()];
        let f = loss.value_and_gradient(&vec![0.0; loss.n_params()], &mut g);
        assert!((f - 3f64.ln()).abs() < 1e-12);
    }

    #[test]
    fn log_softmax_is_stable_for_huge_logits() {
        // Common practice, no source: shifting by the max avoids exp overflow.
        let mut z = array![1000.0, 1000.0, -1000.0];
        let lse = log_softmax_in_place(z.view_mut());
        assert!((lse - (1000.0 + 2f64.ln())).abs() < 1e-9);
        assert!((z[0] - (-(2f64.ln()))).abs() < 1e-12);
        assert!(z.iter().all(|v| v.is_finite()));
    }
}
