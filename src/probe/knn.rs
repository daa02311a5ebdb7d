//! The k-nearest-neighbour probe: each test row takes the class its k nearest training rows
//! vote for.

use ndarray::ArrayView2;
use serde::{Deserialize, Serialize};

use crate::data::{Rows, SoftLabel};
use crate::error::{Error, Result};
use crate::neighbors::{self, Knn, Metric};

use super::KnnStandardizer;

/// How the k neighbours' votes are weighted.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Vote {
    /// One vote per neighbour.
    Uniform,
    /// A neighbour votes `exp(sim / T)`: `sim = 1 − distance` (cosine similarity) for the
    /// cosine metric and `sim = −distance` for the euclidean one. This is the softmax-style
    /// weighting common in self-supervised evaluation; a small `T` lets the nearest
    /// neighbours dominate.
    Weighted,
}

/// Settings of the k-NN probe.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct KnnParams {
    /// Number of neighbours (clamped to the number of training rows at prediction time).
    pub k: usize,
    /// Distance used to find neighbours.
    pub metric: Metric,
    /// How neighbours' votes are combined.
    pub vote: Vote,
    /// Temperature `T` of the weighted vote (ignored by the uniform vote).
    pub temperature: f32,
    /// Centre and scale every feature with the training rows' mean and standard deviation
    /// before the neighbour search ([`KnnStandardizer`]); off by default. In an assessment
    /// the statistics come from the fold's real training rows only, so every method of a fold
    /// is probed in the same space as `none` and the synthetic rows cannot move the metric
    /// they are judged by; the synthetic rows are transformed with the same statistics.
    #[serde(default)]
    pub standardize: bool,
}

impl Default for KnnParams {
    fn default() -> Self {
        KnnParams {
            k: 10,
            metric: Metric::Cosine,
            vote: Vote::Uniform,
            temperature: 0.07,
            standardize: false,
        }
    }
}

impl KnnParams {
    /// Checks the ranges; the probe can only be built from parameters that pass. (`standardize`
    /// is an on/off switch: both values are valid.)
    pub fn validate(&self) -> Result<()> {
        if self.k == 0 {
            return Err(Error::param(
                "k",
                "k-NN needs at least one neighbour (k = 0)",
                "set k to 1 or more (10 is a common choice)",
            ));
        }
        if !(self.temperature.is_finite() && self.temperature > 0.0) {
            return Err(Error::param(
                "temperature",
                format!(
                    "the vote temperature must be a positive finite number, got {}",
                    self.temperature
                ),
                "set a temperature above 0 (0.07 is a common choice)",
            ));
        }
        Ok(())
    }
}

/// A k-NN classifier with validated settings.
///
/// **Decision rule.** Each class collects the votes of the neighbours that carry it (see
/// [`Vote`]); the class with the largest total wins. **Ties** (exactly equal totals) go to
/// the lowest class index. This is scikit-learn's `KNeighborsClassifier` rule (an `argmax`
/// over classes sorted by label), so the two agree whenever class indices follow sorted
/// label order; it is also independent of neighbour order, which keeps predictions stable
/// when equidistant neighbours are reordered.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct KnnProbe {
    params: KnnParams,
}

impl KnnProbe {
    /// A probe from parameters that pass [`KnnParams::validate`].
    pub fn new(params: KnnParams) -> Result<Self> {
        params.validate()?;
        Ok(KnnProbe { params })
    }

    /// The validated parameters.
    pub fn params(&self) -> &KnnParams {
        &self.params
    }

    /// The standardiser fitted on `train_x` when `standardize` is on, `None` when off.
    pub fn standardizer<'a>(&self, train_x: impl Into<Rows<'a>>) -> Option<KnnStandardizer> {
        self.params
            .standardize
            .then(|| KnnStandardizer::fit(train_x))
    }

    /// Class index for every row of `test_x`, voted by its nearest rows of `train_x`.
    ///
    /// `train_y[i]` is the class index of `train_x` row `i`, below `n_classes`. With no
    /// training rows there is no evidence, every class has zero votes, and the tie rule gives
    /// class 0. With `standardize` on, both sides are transformed by the statistics of
    /// `train_x` alone (never of `test_x`).
    pub fn predict(
        &self,
        train_x: ArrayView2<f32>,
        train_y: &[u32],
        n_classes: usize,
        test_x: ArrayView2<f32>,
    ) -> Vec<u32> {
        if train_x.nrows() == 0 || test_x.nrows() == 0 {
            return vec![0; test_x.nrows()];
        }
        let knn = match self.standardizer(train_x) {
            Some(s) => neighbors::knn(
                s.apply(test_x).view(),
                s.apply(train_x).view(),
                self.params.k,
                self.params.metric,
            ),
            None => neighbors::knn(test_x, train_x, self.params.k, self.params.metric),
        };
        self.predict_from_neighbours(&knn, train_y, n_classes)
    }

    /// Class index for every query of an already computed neighbour table (so callers that
    /// need the neighbours for other purposes search only once).
    ///
    /// Only the first `min(k, knn.k)` neighbours of each query vote. Neighbours whose index
    /// has no label in `train_y`, or whose label is not below `n_classes`, are ignored.
    pub fn predict_from_neighbours(
        &self,
        knn: &Knn,
        train_y: &[u32],
        n_classes: usize,
    ) -> Vec<u32> {
        self.predict_weighted(knn, train_y, &[], n_classes, None)
    }

    /// [`KnnProbe::predict_from_neighbours`] (or [`KnnProbe::predict_balanced`] with
    /// `balanced`) where a neighbour with a soft part in `soft` (aligned with `train_y`, or
    /// empty for none) splits its vote: `weight` of it to its own class and `1 − weight` to
    /// its partner class, each times the neighbour's usual vote weight (and class weight).
    pub fn predict_soft(
        &self,
        knn: &Knn,
        train_y: &[u32],
        soft: &[Option<SoftLabel>],
        n_classes: usize,
        balanced: bool,
    ) -> Vec<u32> {
        let weights = balanced.then(|| inverse_class_counts(train_y, n_classes));
        self.predict_weighted(knn, train_y, soft, n_classes, weights.as_deref())
    }

    /// [`KnnProbe::predict_from_neighbours`] with each neighbour's vote multiplied by
    /// `1 / n_c`, `n_c` the number of rows of its class in `train_y`: every class then casts
    /// the same total vote over the whole training set, so a rare class is not outvoted just
    /// for being rare (the k-NN side of `reweight`). See [`inverse_class_counts`].
    pub fn predict_balanced(&self, knn: &Knn, train_y: &[u32], n_classes: usize) -> Vec<u32> {
        let weights = inverse_class_counts(train_y, n_classes);
        self.predict_weighted(knn, train_y, &[], n_classes, Some(&weights))
    }

    /// The vote, with each class's votes scaled by `class_weight[c]` when given and soft
    /// neighbours' votes split as [`KnnProbe::predict_soft`] says.
    fn predict_weighted(
        &self,
        knn: &Knn,
        train_y: &[u32],
        soft: &[Option<SoftLabel>],
        n_classes: usize,
        class_weight: Option<&[f64]>,
    ) -> Vec<u32> {
        let take = self.params.k.min(knn.k);
        let mut votes = vec![0.0f64; n_classes];
        (0..knn.n_queries())
            .map(|q| {
                let (idx, dist) = knn.row(q);
                self.accumulate(
                    &idx[..take],
                    &dist[..take],
                    train_y,
                    soft,
                    class_weight,
                    &mut votes,
                );
                // Only the neighbours' classes hold votes: read and reset those alone, so a
                // query costs O(k), not O(classes) (200,000 one-row classes made this
                // quadratic).
                let partners = idx[..take]
                    .iter()
                    .filter_map(|&i| soft.get(i as usize).copied().flatten())
                    .map(|s| s.partner);
                let touched = || {
                    idx[..take]
                        .iter()
                        .filter_map(|&i| train_y.get(i as usize))
                        .copied()
                        .chain(partners.clone())
                        .map(|c| c as usize)
                        .filter(|&c| c < n_classes)
                };
                let best =
                    touched()
                        .filter(|&c| votes[c] > 0.0)
                        .fold(None::<usize>, |b, c| match b {
                            Some(b) if votes[b] > votes[c] || (votes[b] == votes[c] && b < c) => {
                                Some(b)
                            }
                            _ => Some(c),
                        });
                for c in touched() {
                    votes[c] = 0.0;
                }
                // Votes are never negative, so with none above zero every class ties at 0
                // and the lowest index (0) wins, as a full scan would give.
                best.unwrap_or(0) as u32
            })
            .collect()
    }

    /// Adds each neighbour's vote to its class.
    fn accumulate(
        &self,
        idx: &[u32],
        dist: &[f32],
        train_y: &[u32],
        soft: &[Option<SoftLabel>],
        class_weight: Option<&[f64]>,
        votes: &mut [f64],
    ) {
        let similarity = |d: f32| -> f64 {
            match self.params.metric {
                Metric::Cosine => 1.0 - f64::from(d),
                Metric::Euclidean => -f64::from(d),
            }
        };
        // Weights are exp((sim − sim_max) / T): the shift by the nearest neighbour's similarity
        // is a common factor (the argmax is unchanged) that keeps exp() from overflowing or
        // underflowing to all-zero votes for large euclidean distances.
        let t = f64::from(self.params.temperature);
        let top = dist
            .iter()
            .map(|&d| similarity(d))
            .filter(|s| s.is_finite())
            .fold(f64::NEG_INFINITY, f64::max);
        for (&i, &d) in idx.iter().zip(dist) {
            let Some(&class) = train_y.get(i as usize) else {
                continue;
            };
            let vote = match self.params.vote {
                Vote::Uniform => 1.0,
                Vote::Weighted => ((similarity(d) - top) / t).exp(),
            };
            let cw =
                |c: u32| class_weight.map_or(1.0, |cw| cw.get(c as usize).copied().unwrap_or(0.0));
            match soft.get(i as usize).copied().flatten() {
                None => {
                    let Some(slot) = votes.get_mut(class as usize) else {
                        continue;
                    };
                    let w = vote * cw(class);
                    if w.is_finite() {
                        *slot += w;
                    }
                }
                Some(s) => {
                    let own = f64::from(s.weight);
                    for (c, share) in [(class, own), (s.partner, 1.0 - own)] {
                        let w = vote * share * cw(c);
                        if let Some(slot) = votes.get_mut(c as usize)
                            && w.is_finite()
                        {
                            *slot += w;
                        }
                    }
                }
            }
        }
    }
}

/// `1 / n_c` for every class c below `n_classes`, `n_c` its rows in `y` (0 for a class with
/// no rows: it has no neighbour to weigh).
pub fn inverse_class_counts(y: &[u32], n_classes: usize) -> Vec<f64> {
    let mut counts = vec![0usize; n_classes];
    for &c in y {
        if let Some(n) = counts.get_mut(c as usize) {
            *n += 1;
        }
    }
    counts
        .into_iter()
        .map(|n| if n > 0 { 1.0 / n as f64 } else { 0.0 })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn table(k: usize, rows: &[(&[u32], &[f32])]) -> Knn {
        Knn {
            k,
            indices: rows.iter().flat_map(|r| r.0.iter().copied()).collect(),
            distances: rows.iter().flat_map(|r| r.1.iter().copied()).collect(),
        }
    }

    fn probe(k: usize, metric: Metric, vote: Vote) -> KnnProbe {
        KnnProbe::new(KnnParams {
            k,
            metric,
            vote,
            temperature: 0.07,
            standardize: false,
        })
        .unwrap()
    }

    #[test]
    fn uniform_vote_counts_and_ties_go_to_lowest_class() {
        // Common practice, no source (scikit-learn's argmax tie rule): labels of the train rows.
        let train_y = [2, 1, 1, 2, 0];
        let knn = table(
            4,
            &[
                (&[1, 2, 0, 4], &[0.1, 0.2, 0.3, 0.4]), // class 1 ×2, 2 ×1, 0 ×1 → 1
                (&[0, 1, 3, 2], &[0.1, 0.2, 0.3, 0.4]), // 2 ×2 vs 1 ×2 tie → lowest = 1
                (&[4, 0, 1, 3], &[0.0, 0.5, 0.6, 0.7]), // 0,2,1,2 → 2
            ],
        );
        let p = probe(4, Metric::Cosine, Vote::Uniform);
        assert_eq!(p.predict_from_neighbours(&knn, &train_y, 3), vec![1, 1, 2]);
    }

    #[test]
    fn soft_neighbours_split_their_vote() {
        // Worked example, from the rule (a mixed row's target λ·e(c) + (1 − λ)·e(partner),
        // Zhang et al. 2018, voted with the neighbour's usual weight): rows 0, 1 are hard
        // class 0 and 1; rows 2, 3 are class 2 mixed towards class 1 with λ = 0.6 and 0.8.
        let train_y = [0, 1, 2, 2];
        let soft = [
            None,
            None,
            Some(SoftLabel {
                partner: 1,
                weight: 0.6,
            }),
            Some(SoftLabel {
                partner: 1,
                weight: 0.8,
            }),
        ];
        let knn = table(
            3,
            &[
                // hard: 2 ×2, 1 ×1 → 2; soft: class 2 = 0.6 + 0.8 = 1.4, class 1 = 1 + 0.4 + 0.2
                // = 1.6 → 1.
                (&[1, 2, 3], &[0.1, 0.2, 0.3]),
                // hard: 0 ×2, 2 ×1 → 0; soft: 0 = 2, 2 = 0.8, 1 = 0.2 → 0.
                (&[0, 3, 0], &[0.1, 0.2, 0.3]),
            ],
        );
        let p = probe(3, Metric::Cosine, Vote::Uniform);
        assert_eq!(p.predict_from_neighbours(&knn, &train_y, 3), vec![2, 0]);
        assert_eq!(p.predict_soft(&knn, &train_y, &soft, 3, false), vec![1, 0]);
        // No soft part: the same votes as the hard rule.
        assert_eq!(p.predict_soft(&knn, &train_y, &[], 3, false), vec![2, 0]);
        // Balanced (1 / n_c: 1, 1, ½): query 0 gives class 2 (0.6 + 0.8)/2 = 0.7 and class 1
        // 1 + 0.4 + 0.2 = 1.6 → 1.
        assert_eq!(p.predict_soft(&knn, &train_y, &soft, 3, true), vec![1, 0]);
    }

    #[test]
    fn weighted_vote_lets_a_close_neighbour_win() {
        // Common practice, no source: exp(0.95/0.07) ≈ 7.9e5 outweighs 2 × exp(0.5/0.07) ≈ 2.5e3.
        let train_y = [0, 1, 1];
        let knn = table(3, &[(&[0, 1, 2], &[0.05, 0.5, 0.5])]);
        assert_eq!(
            probe(3, Metric::Cosine, Vote::Uniform).predict_from_neighbours(&knn, &train_y, 2),
            vec![1]
        );
        assert_eq!(
            probe(3, Metric::Cosine, Vote::Weighted).predict_from_neighbours(&knn, &train_y, 2),
            vec![0]
        );
    }

    #[test]
    fn weighted_euclidean_uses_negative_distance_without_underflow() {
        // From the definition sim = −distance: at distances ~1e3 the unshifted weights
        // exp(−d/0.07) all underflow to 0; the shift keeps the nearer class winning.
        let train_y = [1, 0, 0];
        let knn = table(3, &[(&[0, 1, 2], &[1000.0, 1000.1, 1000.2])]);
        let p = probe(3, Metric::Euclidean, Vote::Weighted);
        // exp(0) = 1 vs exp(−0.1/0.07) + exp(−0.2/0.07) ≈ 0.24 + 0.06.
        assert_eq!(p.predict_from_neighbours(&knn, &train_y, 2), vec![1]);
    }

    #[test]
    fn only_the_first_k_neighbours_vote_and_bad_labels_are_ignored() {
        // Common practice, no source.
        let train_y = [0, 1, 1, 7];
        let knn = table(4, &[(&[0, 3, 1, 2], &[0.1, 0.2, 0.3, 0.4])]);
        // k = 2: row 0 (class 0) and row 3 (label 7 ≥ n_classes, ignored) → class 0.
        assert_eq!(
            probe(2, Metric::Cosine, Vote::Uniform).predict_from_neighbours(&knn, &train_y, 2),
            vec![0]
        );
        // k = 4: class 1 twice → 1.
        assert_eq!(
            probe(4, Metric::Cosine, Vote::Uniform).predict_from_neighbours(&knn, &train_y, 2),
            vec![1]
        );
    }

    #[test]
    fn balanced_vote_divides_each_neighbour_by_its_class_count() {
        // Worked example from the definition (vote of class c = Σ neighbours of c × 1/n_c):
        // training labels 0 ×4, 1 ×2. Neighbours (0, 0, 0, 1): uniform 3 vs 1, balanced
        // 3/4 vs 1/2 → class 0 both ways. Neighbours (0, 0, 1, 1): uniform 2 vs 2 ties → the
        // lowest index, 0; balanced 2/4 vs 2/2 → class 1.
        let train_y = [0, 0, 0, 0, 1, 1];
        let knn = table(
            4,
            &[
                (&[0, 1, 2, 4], &[0.1, 0.2, 0.3, 0.4]),
                (&[0, 1, 4, 5], &[0.1, 0.2, 0.3, 0.4]),
            ],
        );
        let p = probe(4, Metric::Cosine, Vote::Uniform);
        assert_eq!(p.predict_from_neighbours(&knn, &train_y, 2), vec![0, 0]);
        assert_eq!(p.predict_balanced(&knn, &train_y, 2), vec![0, 1]);
        assert_eq!(inverse_class_counts(&train_y, 3), vec![0.25, 0.5, 0.0]);
        // With the weighted vote the class weight multiplies exp(sim/T): neighbours at cosine
        // distances 0.1 (class 0) and 0.2 (class 1): 1/4 · e^0 = 0.25 against
        // 1/2 · e^(−0.1/0.07) ≈ 0.120 → class 0; with class 0 at 12 rows, 1/12 ≈ 0.083 <
        // 0.120 → class 1.
        let knn = table(2, &[(&[0, 4], &[0.1, 0.2])]);
        let w = probe(2, Metric::Cosine, Vote::Weighted);
        assert_eq!(w.predict_balanced(&knn, &train_y, 2), vec![0]);
        let mut many = vec![0u32; 12];
        many.extend([1, 1]);
        let knn = table(2, &[(&[0, 12], &[0.1, 0.2])]);
        assert_eq!(w.predict_balanced(&knn, &many, 2), vec![1]);
    }

    #[test]
    fn no_training_rows_predicts_class_zero() {
        // Common practice, no source: all votes are zero, the tie rule picks class 0.
        let p = probe(3, Metric::Cosine, Vote::Uniform);
        let train = ndarray::Array2::<f32>::zeros((0, 2));
        let test = ndarray::Array2::<f32>::ones((2, 2));
        assert_eq!(p.predict(train.view(), &[], 3, test.view()), vec![0, 0]);
    }

    #[test]
    fn validate_rejects_bad_settings() {
        // Common practice, no source.
        let bad_k = KnnParams {
            k: 0,
            ..KnnParams::default()
        };
        assert!(bad_k.validate().unwrap_err().to_string().contains("fix:"));
        for t in [0.0, -1.0, f32::NAN, f32::INFINITY] {
            let p = KnnParams {
                temperature: t,
                ..KnnParams::default()
            };
            assert!(KnnProbe::new(p).is_err(), "temperature {t}");
        }
        assert!(KnnProbe::new(KnnParams::default()).is_ok());
    }
}
