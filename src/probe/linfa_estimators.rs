//! The probes as linfa estimators, so library users can fit them on a linfa `Dataset` and
//! use them wherever linfa's `Fit` / `Predict` traits are expected (cross-validation helpers,
//! pipelines). Targets are class indices (`usize`), as in linfa's classifiers.

use linfa::dataset::DatasetBase;
use linfa::traits::{Fit, PredictInplace};
use ndarray::{Array1, Array2, ArrayBase, Data, Ix1, Ix2};

use super::{KnnParams, KnnProbe, LinearModel, LinearParams, LinearProbe};
use crate::error::{Error, Result};

impl From<linfa::Error> for Error {
    fn from(e: linfa::Error) -> Self {
        Error::data(
            format!("linfa: {e}"),
            "check the dataset passed to the estimator",
        )
    }
}

/// Class indices as `u32` and the number of classes, refusing indices too large to be labels.
fn class_targets<D: Data<Elem = usize>>(targets: &ArrayBase<D, Ix1>) -> Result<(Vec<u32>, usize)> {
    let mut y = Vec::with_capacity(targets.len());
    for (row, &t) in targets.iter().enumerate() {
        let t = u32::try_from(t).map_err(|_| {
            Error::data(
                format!("target {t} at row {row} is not a class index"),
                "use class indices 0..C",
            )
        })?;
        y.push(t);
    }
    let n_classes = y.iter().map(|&t| t as usize + 1).max().unwrap_or(0);
    Ok((y, n_classes))
}

impl<D: Data<Elem = f32>, T: Data<Elem = usize>> Fit<ArrayBase<D, Ix2>, ArrayBase<T, Ix1>, Error>
    for LinearParams
{
    type Object = LinearModel;

    fn fit(
        &self,
        dataset: &DatasetBase<ArrayBase<D, Ix2>, ArrayBase<T, Ix1>>,
    ) -> Result<LinearModel> {
        let (y, n_classes) = class_targets(dataset.targets())?;
        LinearProbe::new(*self)?.fit(dataset.records().view(), &y, n_classes, None)
    }
}

impl<D: Data<Elem = f32>> PredictInplace<ArrayBase<D, Ix2>, Array1<usize>> for LinearModel {
    fn predict_inplace(&self, x: &ArrayBase<D, Ix2>, y: &mut Array1<usize>) {
        for (dst, p) in y.iter_mut().zip(self.predict(x.view())) {
            *dst = p as usize;
        }
    }

    fn default_target(&self, x: &ArrayBase<D, Ix2>) -> Array1<usize> {
        Array1::zeros(x.nrows())
    }
}

/// A k-NN probe with its training rows, as linfa's `Fit` returns it.
#[derive(Debug, Clone)]
pub struct FittedKnn {
    probe: KnnProbe,
    x: Array2<f32>,
    y: Vec<u32>,
    n_classes: usize,
}

impl<D: Data<Elem = f32>, T: Data<Elem = usize>> Fit<ArrayBase<D, Ix2>, ArrayBase<T, Ix1>, Error>
    for KnnParams
{
    type Object = FittedKnn;

    fn fit(
        &self,
        dataset: &DatasetBase<ArrayBase<D, Ix2>, ArrayBase<T, Ix1>>,
    ) -> Result<FittedKnn> {
        let (y, n_classes) = class_targets(dataset.targets())?;
        Ok(FittedKnn {
            probe: KnnProbe::new(*self)?,
            x: dataset.records().to_owned(),
            y,
            n_classes,
        })
    }
}

impl<D: Data<Elem = f32>> PredictInplace<ArrayBase<D, Ix2>, Array1<usize>> for FittedKnn {
    fn predict_inplace(&self, x: &ArrayBase<D, Ix2>, y: &mut Array1<usize>) {
        let pred = self
            .probe
            .predict(self.x.view(), &self.y, self.n_classes, x.view());
        for (dst, p) in y.iter_mut().zip(pred) {
            *dst = p as usize;
        }
    }

    fn default_target(&self, x: &ArrayBase<D, Ix2>) -> Array1<usize> {
        Array1::zeros(x.nrows())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use linfa::traits::Predict;
    use ndarray::array;

    #[test]
    fn probes_fit_and_predict_through_linfa_traits() {
        // common practice, no source: two well-separated clusters are classified perfectly.
        let x = array![
            [0.0f32, 0.1],
            [0.1, 0.0],
            [0.0, 0.0],
            [5.0, 5.1],
            [5.1, 5.0],
            [5.0, 5.0]
        ];
        let ds = DatasetBase::new(x.clone(), array![0usize, 0, 0, 1, 1, 1]);
        let linear = LinearParams::default().fit(&ds).unwrap();
        let predicted: Array1<usize> = Predict::predict(&linear, &x);
        assert_eq!(predicted.to_vec(), vec![0, 0, 0, 1, 1, 1]);
        let knn = KnnParams {
            k: 3,
            metric: crate::neighbors::Metric::Euclidean,
            ..KnnParams::default()
        }
        .fit(&ds)
        .unwrap();
        assert_eq!(knn.predict(&x).to_vec(), vec![0, 0, 0, 1, 1, 1]);
    }
}
