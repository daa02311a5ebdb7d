//! Where the synthetic rows of a fold sit relative to the real data: do they stay inside their
//! class or intrude into a neighbour's, are they closer to real rows than real rows are to each
//! other (copies) or far away (off the manifold), and how do they cover the class's held-out
//! real rows (precision, recall, density, coverage).
//!
//! Everything is computed per fold from that fold's rows only: real training rows R, synthetic
//! rows S (fitted on R), and the fold's held-out real test rows T.

use ndarray::{ArrayView2, Axis};
use serde::{Deserialize, Serialize};

use crate::data::Rows;
use crate::neighbors::{Knn, Metric, knn, knn_within};

/// The neighbourhood size of PRDC (Naeem et al. 2020 recommend k = 5).
pub const PRDC_K: usize = 5;

/// Diagnostics of one class in one fold. NaN marks a figure the fold's rows cannot support.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ClassDiagnostics {
    /// Class index into the dataset's classes.
    pub class: u32,
    /// Synthetic rows of the class.
    pub synthetic: usize,
    /// Share of the class's synthetic rows whose nearest real training row has another class.
    pub intrusion_synthetic: f64,
    /// Share of the class's real training rows whose nearest *other* real training row has
    /// another class — the baseline the synthetic figure is read against.
    pub intrusion_real: f64,
    /// Median over the class's synthetic rows of the distance to the nearest real training row
    /// (any class), divided by the median over the class's real training rows of the distance
    /// to the nearest other real training row (any class). Near 0: near-copies of real rows;
    /// around 1: as spread as real data; well above 1: off the data. NaN if either side is
    /// empty or the denominator is 0.
    pub distance_ratio: f64,
    /// PRDC of the class's synthetic rows ("fake") against its held-out real test rows ("real")
    /// (Naeem et al. 2020, "Reliable Fidelity and Diversity Metrics for Generative Models",
    /// eqs. 3–6), with k = [`ClassDiagnostics::prdc_k`].
    pub precision: f64,
    /// PRDC recall (see `precision`).
    pub recall: f64,
    /// PRDC density (see `precision`).
    pub density: f64,
    /// PRDC coverage (see `precision`).
    pub coverage: f64,
    /// The k used for PRDC: min(5, real − 1, fake − 1); 0 when either set has under two rows,
    /// and then the four PRDC figures are NaN.
    pub prdc_k: usize,
}

/// A fold's real training rows with each row's nearest other real training row. It depends
/// on the fold only, so it is built once and shared by every method's diagnostics.
pub struct TrainingRows<'a> {
    x: Rows<'a>,
    y: &'a [u32],
    pub(crate) metric: Metric,
    /// Per training row, its nearest other training row and the distance; `None` for rows
    /// of classes not asked for (and when there is no other row).
    nearest: Vec<Option<(usize, f64)>>,
}

impl<'a> TrainingRows<'a> {
    /// Rows of `x` pair with `y` (extra rows on either side are ignored).
    pub fn new(x: impl Into<Rows<'a>>, y: &'a [u32], metric: Metric) -> Self {
        Self::build(x.into(), y, metric, None)
    }

    /// [`TrainingRows::new`] with the nearest neighbours found only for the rows of
    /// `classes`, the only ones [`class_diagnostics`] reads for those classes. A fold grows a
    /// few classes, so this searches their rows against the base instead of every row: the
    /// full search is as large as the k-NN probe's own.
    /// `x` may be a fold's rows picked from the input matrix ([`Rows`]).
    pub fn for_classes(
        x: impl Into<Rows<'a>>,
        y: &'a [u32],
        metric: Metric,
        classes: &[u32],
    ) -> Self {
        Self::build(x.into(), y, metric, Some(classes))
    }

    fn build(x: Rows<'a>, y: &'a [u32], metric: Metric, classes: Option<&[u32]>) -> Self {
        let n = x.nrows().min(y.len());
        let x = x.first(n);
        let y = &y[..n];
        let rows: Vec<usize> = match classes {
            None => (0..n).collect(),
            Some(c) => {
                let wanted: std::collections::BTreeSet<u32> = c.iter().copied().collect();
                (0..n).filter(|&i| wanted.contains(&y[i])).collect()
            }
        };
        let mut nearest = vec![None; n];
        if n > 1 && rows.len() == n {
            let nn = knn_within(x, 1, metric);
            for (i, slot) in nearest.iter_mut().enumerate() {
                let (idx, dist) = nn.row(i);
                *slot = idx
                    .first()
                    .zip(dist.first())
                    .map(|(&j, &d)| (j as usize, f64::from(d)));
            }
        } else if n > 1 && !rows.is_empty() {
            // Each row's two nearest rows of the whole set, itself among them unless two
            // exact copies with lower indices come first: the first that is not the row
            // itself is what `knn_within` gives (same exact keys, same tie order).
            let nn = knn(x.select(&rows).view(), x, 2, metric);
            for (q, &i) in rows.iter().enumerate() {
                let (idx, dist) = nn.row(q);
                nearest[i] = idx
                    .iter()
                    .zip(dist)
                    .find(|&(&j, _)| j as usize != i)
                    .map(|(&j, &d)| (j as usize, f64::from(d)));
            }
        }
        TrainingRows {
            x,
            y,
            metric,
            nearest,
        }
    }
}

/// Diagnostics for each class in `classes` (in that order), with the training rows' metric.
/// Rows of `*_x` pair with `*_y`. With `train` from [`TrainingRows::for_classes`], `classes`
/// must be among the classes given there (others get no real-row figures).
pub fn class_diagnostics<'t>(
    train: &TrainingRows,
    synth_x: ArrayView2<f32>,
    synth_y: &[u32],
    test_x: impl Into<Rows<'t>>,
    test_y: &[u32],
    classes: &[u32],
) -> Vec<ClassDiagnostics> {
    let test_x = test_x.into();
    let (train_x, train_y, metric) = (train.x, train.y, train.metric);
    let n_train = train_y.len();
    let n_synth = synth_x.nrows().min(synth_y.len());
    let n_test = test_x.nrows().min(test_y.len());
    let synth_x = synth_x.slice(ndarray::s![..n_synth, ..]);
    let test_x = test_x.first(n_test);

    // Nearest real training row of every synthetic row (one search, shared by all classes);
    // the nearest other real training row of every real row comes with `train`.
    let synth_nn = (n_train > 0).then(|| knn(synth_x, train_x, 1, metric));
    let nearest = |nn: &Option<Knn>, i: usize| -> Option<(usize, f64)> {
        let nn = nn.as_ref()?;
        let (idx, dist) = nn.row(i);
        Some((*idx.first()? as usize, f64::from(*dist.first()?)))
    };

    // Rows of each asked-for class, in one pass per side: scanning every row once per class
    // made many grown classes cost classes × rows.
    let synth_by = rows_by_class(&synth_y[..n_synth], classes);
    let train_by = rows_by_class(&train_y[..n_train], classes);
    let test_by = rows_by_class(&test_y[..n_test], classes);

    classes
        .iter()
        .enumerate()
        .map(|(ci, &c)| {
            let (synth_rows, train_rows, test_rows) = (&synth_by[ci], &train_by[ci], &test_by[ci]);

            let synth_near: Vec<(usize, f64)> = synth_rows
                .iter()
                .filter_map(|&i| nearest(&synth_nn, i))
                .collect();
            let real_near: Vec<(usize, f64)> = train_rows
                .iter()
                .filter_map(|&i| train.nearest[i])
                .collect();
            let intrusion = |near: &[(usize, f64)]| {
                share(
                    near.iter().filter(|&&(j, _)| train_y[j] != c).count(),
                    near.len(),
                )
            };
            let den = median(
                real_near
                    .iter()
                    .map(|&(_, d)| ratio_distance(d, metric))
                    .collect(),
            );
            let num = median(
                synth_near
                    .iter()
                    .map(|&(_, d)| ratio_distance(d, metric))
                    .collect(),
            );

            let prdc = prdc(
                test_x.select(test_rows).view(),
                synth_x.select(Axis(0), synth_rows).view(),
                metric,
            );
            ClassDiagnostics {
                class: c,
                synthetic: synth_rows.len(),
                intrusion_synthetic: intrusion(&synth_near),
                intrusion_real: intrusion(&real_near),
                distance_ratio: if den > 0.0 { num / den } else { f64::NAN },
                precision: prdc.precision,
                recall: prdc.recall,
                density: prdc.density,
                coverage: prdc.coverage,
                prdc_k: prdc.k,
            }
        })
        .collect()
}

/// The distance the distance ratio is taken in: euclidean as searched, and under cosine the
/// angle between the rows, arccos(1 − d). 1 − cos grows with the square of the angle, so a
/// ratio of such distances would make interpolated rows look like near-copies.
pub fn ratio_distance(d: f64, metric: Metric) -> f64 {
    match metric {
        Metric::Euclidean => d,
        Metric::Cosine => (1.0 - d).clamp(-1.0, 1.0).acos(),
    }
}

/// What [`ratio_distance`] measures under `metric`, for the report.
pub fn ratio_distance_name(metric: Metric) -> &'static str {
    match metric {
        Metric::Euclidean => "euclidean distance",
        Metric::Cosine => "angle (arccos of the cosine similarity)",
    }
}

/// Precision, recall, density and coverage of `fake` against `real` (Naeem et al. 2020).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Prdc {
    /// Share of fake rows inside some real row's k-NN ball.
    pub precision: f64,
    /// Share of real rows inside some fake row's k-NN ball.
    pub recall: f64,
    /// Mean number of real k-NN balls holding a fake row, over k.
    pub density: f64,
    /// Share of real rows whose own k-NN ball holds a fake row.
    pub coverage: f64,
    /// The neighbourhood size actually used.
    pub k: usize,
}

/// PRDC with k = min(5, N − 1, M − 1), N real and M fake rows; below k = 2 a ball is one
/// neighbour wide and the figures say nothing, so they are NaN (not available) with that k. Radii r(x) are the distance to
/// the k-th nearest other row of the same set; a ball is B(x, r(x)) = {y : d(x, y) ≤ r(x)}.
/// - precision = (1/M) Σ_fake 1[fake lies in some real ball]
/// - recall    = (1/N) Σ_real 1[real lies in some fake ball]
/// - density   = (1/(kM)) Σ_fake Σ_real 1[fake lies in real's ball]
/// - coverage  = (1/N) Σ_real 1[real's nearest fake lies in real's ball]
pub fn prdc(real: ArrayView2<f32>, fake: ArrayView2<f32>, metric: Metric) -> Prdc {
    let (n, m) = (real.nrows(), fake.nrows());
    let k = PRDC_K.min(n.saturating_sub(1)).min(m.saturating_sub(1));
    if k < 2 {
        return Prdc {
            precision: f64::NAN,
            recall: f64::NAN,
            density: f64::NAN,
            coverage: f64::NAN,
            k,
        };
    }
    let kth = |x: ArrayView2<f32>| -> Vec<f64> {
        let nn = knn_within(x, k, metric);
        (0..x.nrows())
            .map(|i| nn.row(i).1.get(k - 1).map_or(f64::NAN, |&d| f64::from(d)))
            .collect()
    };
    let r_real = kth(real);
    let r_fake = kth(fake);

    // Full fake × real distance matrix, from a search that returns every real row.
    let all = knn(fake, real, n, metric);
    let mut dist = vec![f64::INFINITY; m * n];
    for i in 0..m {
        let (idx, d) = all.row(i);
        for (&j, &dj) in idx.iter().zip(d) {
            dist[i * n + j as usize] = f64::from(dj);
        }
    }
    let d = |i: usize, j: usize| dist[i * n + j];

    let mut precise = 0usize;
    let mut inside = 0usize;
    for i in 0..m {
        let c = (0..n).filter(|&j| d(i, j) <= r_real[j]).count();
        inside += c;
        precise += usize::from(c > 0);
    }
    let recalled = (0..n)
        .filter(|&j| (0..m).any(|i| d(i, j) <= r_fake[i]))
        .count();
    let covered = (0..n)
        .filter(|&j| {
            let nearest = (0..m).map(|i| d(i, j)).fold(f64::INFINITY, f64::min);
            nearest <= r_real[j]
        })
        .count();
    Prdc {
        precision: share(precise, m),
        recall: share(recalled, n),
        density: inside as f64 / (k * m) as f64,
        coverage: share(covered, n),
        k,
    }
}

/// For each of `classes` (by position; a class asked twice gets its rows twice), the indices
/// of its rows in `labels`, in row order.
fn rows_by_class(labels: &[u32], classes: &[u32]) -> Vec<Vec<usize>> {
    let mut slot: std::collections::HashMap<u32, Vec<usize>> = std::collections::HashMap::new();
    for (ci, &c) in classes.iter().enumerate() {
        slot.entry(c).or_default().push(ci);
    }
    let mut out = vec![Vec::new(); classes.len()];
    for (i, l) in labels.iter().enumerate() {
        if let Some(positions) = slot.get(l) {
            for &ci in positions {
                out[ci].push(i);
            }
        }
    }
    out
}

fn share(count: usize, of: usize) -> f64 {
    if of == 0 {
        f64::NAN
    } else {
        count as f64 / of as f64
    }
}

/// Median (mean of the two middle values for an even count, as numpy); NaN when empty.
fn median(mut v: Vec<f64>) -> f64 {
    if v.is_empty() {
        return f64::NAN;
    }
    v.sort_by(f64::total_cmp);
    let h = v.len() / 2;
    if v.len() % 2 == 1 {
        v[h]
    } else {
        0.5 * (v[h - 1] + v[h])
    }
}
