//! The nearest-centroid probe: each test row takes the class whose training mean is closest.
//!
//! This is the prototype classifier of few-shot learning (Snell, Swersky & Zemel 2017,
//! "Prototypical Networks for Few-shot Learning"): one prototype per class, the mean of its
//! rows. It reads an augmentation differently from k-NN: a class's synthetic rows move its
//! mean, so the probe measures whether they shift the class's centre, not its local density.

use crate::data::Rows;

use crate::error::{Error, Result};
use crate::neighbors::Metric;

/// A nearest-centroid classifier under one metric.
///
/// **Decision rule.** With the euclidean metric, each class's prototype is the mean of its
/// training rows and a test row takes the class at the smallest ‖x − μ_c‖₂ (scikit-learn's
/// `NearestCentroid`). With the cosine metric, every training and test row is first scaled to
/// unit length (a zero row stays zero), the prototype is the mean of the scaled rows, and a
/// test row takes the class with the largest cos(x, μ_c); a zero prototype or test row has
/// similarity 0. Means and distances are accumulated in f64. **Ties** (exactly equal scores)
/// go to the lowest class index; a class with no training rows has no prototype and is never
/// predicted, and with no training rows at all every row gets class 0.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct CentroidProbe {
    metric: Metric,
}

impl CentroidProbe {
    /// A probe comparing rows to class means under `metric` (the k-NN probe's metric in
    /// `assess`, so the two probes see the same geometry).
    pub fn new(metric: Metric) -> Self {
        CentroidProbe { metric }
    }

    /// The metric rows are compared under.
    pub fn metric(&self) -> Metric {
        self.metric
    }

    /// Class index for every row of `test_x`, from the class means of the training rows
    /// stacked from `parts` (real rows, then synthetic ones) with `train_y[i]` the class of
    /// stacked row `i`, below `n_classes`.
    ///
    /// Fails when the parts and the test rows differ in width, when `train_y` does not give
    /// one label per stacked row, or when a label is not below `n_classes`.
    /// Either side may be picked rows of a larger matrix ([`Rows`]): they are read in place.
    pub fn predict<'a, 't, P: Copy + Into<Rows<'a>>>(
        &self,
        parts: &[P],
        train_y: &[u32],
        n_classes: usize,
        test_x: impl Into<Rows<'t>>,
    ) -> Result<Vec<u32>> {
        let parts: Vec<Rows<'a>> = parts.iter().map(|&p| p.into()).collect();
        let test_x = test_x.into();
        let dims = test_x.ncols();
        if let Some(p) = parts.iter().find(|p| p.ncols() != dims) {
            return Err(Error::data(
                format!(
                    "the centroid probe got training rows of width {} and test rows of width {dims}",
                    p.ncols()
                ),
                "give training and test rows with the same number of columns",
            ));
        }
        let n_train: usize = parts.iter().map(|p| p.nrows()).sum();
        if n_train != train_y.len() {
            return Err(Error::data(
                format!(
                    "the centroid probe got {n_train} training rows but {} labels",
                    train_y.len()
                ),
                "give one class index per training row",
            ));
        }
        if let Some((i, &c)) = train_y
            .iter()
            .enumerate()
            .find(|&(_, &c)| c as usize >= n_classes)
        {
            return Err(Error::data(
                format!("training row {i} has class index {c}, but there are {n_classes} classes"),
                "give class indices below the number of classes",
            ));
        }
        let centroids = self.centroids(&parts, train_y, n_classes, dims);
        Ok(test_x
            .iter()
            .map(|row| {
                let x = self.prepare(row.iter().copied());
                let mut best: Option<(usize, f64)> = None;
                for (c, mean) in centroids.iter().enumerate() {
                    let Some(mean) = mean else { continue };
                    let score = self.score(&x, mean);
                    // Strictly better only: an equal score keeps the earlier (lower) class.
                    if best.is_none_or(|(_, b)| score > b) {
                        best = Some((c, score));
                    }
                }
                best.map_or(0, |(c, _)| c as u32)
            })
            .collect())
    }

    /// A row in f64, scaled to unit length under the cosine metric.
    fn prepare(&self, row: impl Iterator<Item = f32>) -> Vec<f64> {
        let mut v: Vec<f64> = row.map(f64::from).collect();
        if self.metric == Metric::Cosine {
            let norm = v.iter().map(|a| a * a).sum::<f64>().sqrt();
            if norm > 0.0 {
                v.iter_mut().for_each(|a| *a /= norm);
            }
        }
        v
    }

    /// Each class's mean (None for a class without rows), the cosine-prepared rows averaged
    /// under the cosine metric.
    fn centroids(
        &self,
        parts: &[Rows<'_>],
        train_y: &[u32],
        n_classes: usize,
        dims: usize,
    ) -> Vec<Option<Vec<f64>>> {
        let mut sums = vec![vec![0.0f64; dims]; n_classes];
        let mut counts = vec![0usize; n_classes];
        let rows = parts.iter().flat_map(|p| p.iter());
        for (row, &c) in rows.zip(train_y) {
            let x = self.prepare(row.iter().copied());
            let c = c as usize;
            counts[c] += 1;
            sums[c].iter_mut().zip(&x).for_each(|(s, v)| *s += v);
        }
        sums.into_iter()
            .zip(counts)
            .map(|(mut s, n)| {
                (n > 0).then(|| {
                    s.iter_mut().for_each(|v| *v /= n as f64);
                    s
                })
            })
            .collect()
    }

    /// Higher is nearer: −‖x − μ‖₂ (euclidean) or cos(x, μ) with `x` already unit length.
    fn score(&self, x: &[f64], mean: &[f64]) -> f64 {
        match self.metric {
            Metric::Euclidean => -x
                .iter()
                .zip(mean)
                .map(|(a, b)| (a - b) * (a - b))
                .sum::<f64>()
                .sqrt(),
            Metric::Cosine => {
                let norm = mean.iter().map(|a| a * a).sum::<f64>().sqrt();
                if norm > 0.0 {
                    x.iter().zip(mean).map(|(a, b)| a * b).sum::<f64>() / norm
                } else {
                    0.0
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    #[test]
    fn nearest_mean_wins_and_ties_go_low() {
        // From the definition (Snell et al. 2017): means are (0,0) and (4,0); (1,0) is
        // nearer the first, (3,0) the second, and (2,0) is equidistant, so class 0 wins.
        let train = array![[-1.0f32, 0.0], [1.0, 0.0], [3.0, 0.0], [5.0, 0.0]];
        let test = array![[1.0f32, 0.0], [3.0, 0.0], [2.0, 0.0]];
        let probe = CentroidProbe::new(Metric::Euclidean);
        let pred = probe
            .predict(&[train.view()], &[0, 0, 1, 1], 2, test.view())
            .unwrap();
        assert_eq!(pred, vec![0, 1, 0]);
    }

    #[test]
    fn cosine_ignores_row_length() {
        // From the definition: after scaling rows to unit length, (10,1) points along the
        // first class's direction (1,0) however long the second class's rows are.
        let train = array![[1.0f32, 0.0], [0.0, 100.0]];
        let test = array![[10.0f32, 1.0], [0.0, 0.5]];
        let probe = CentroidProbe::new(Metric::Cosine);
        let pred = probe
            .predict(&[train.view()], &[0, 1], 2, test.view())
            .unwrap();
        assert_eq!(pred, vec![0, 1]);
    }

    #[test]
    fn empty_class_is_never_predicted() {
        // Common practice, no source: a class with no rows has no prototype.
        let train = array![[5.0f32], [6.0]];
        let probe = CentroidProbe::new(Metric::Euclidean);
        let pred = probe
            .predict(&[train.view()], &[1, 1], 2, array![[0.0f32]].view())
            .unwrap();
        assert_eq!(pred, vec![1]);
    }

    #[test]
    fn bad_labels_and_widths_are_errors() {
        // Common practice, no source: mismatched inputs are typed errors, not panics.
        let train = array![[1.0f32, 0.0]];
        let probe = CentroidProbe::new(Metric::Euclidean);
        let narrow = array![[1.0f32]];
        assert!(
            probe
                .predict(&[train.view()], &[0], 1, narrow.view())
                .is_err()
        );
        assert!(
            probe
                .predict(&[train.view()], &[], 1, train.view())
                .is_err()
        );
        let msg = probe
            .predict(&[train.view()], &[3], 2, train.view())
            .unwrap_err()
            .to_string();
        assert!(msg.contains("class index 3"), "{msg}");
    }
}
