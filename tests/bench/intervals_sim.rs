//! A coverage simulation of the intervals `assess` prints, shared by the benchmark
//! (`cargo bench --bench intervals`, the README's table) and a small statistical test.
//!
//! Generative model (our own): C Gaussian classes in d dimensions, identity covariance, class
//! means drawn once per configuration from N(0, s²·I), class sizes falling like a Zipf law
//! with tiny classes. The truth is the expected difference "method − none" of the figure for
//! a training set of the size a fold trains on, by Monte Carlo: fresh training sets, each
//! scored on a fresh large balanced test set (balanced, so its mean per-class recall is the
//! population balanced accuracy). Each simulated data set is then assessed through the
//! library, and every interval kind is computed from the same fold records.

#![allow(dead_code)]

use embloom::Dataset;
use embloom::assess::{AssessConfig, InputInfo, assess, summary_with};
use embloom::augment::UnitNorm;
use embloom::augment::{self, AugmentParams, MethodKind, Plan, Target};
use embloom::eval::IntervalKind;
use embloom::neighbors::{self, Metric};
use embloom::probe::{KnnParams, KnnProbe, LinearParams, ProbeKind};
use ndarray::{Array2, Axis, concatenate};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::StandardNormal;
use rayon::prelude::*;

/// One simulated world.
#[derive(Debug, Clone)]
pub struct World {
    pub name: &'static str,
    pub sizes: Vec<usize>,
    pub dims: usize,
    /// Standard deviation of the class means around the origin.
    pub spread: f64,
    pub method: MethodKind,
    pub target: Target,
    /// Classes growth is limited to (`--classes`), if any.
    pub only: Option<Vec<String>>,
    /// The summary metric whose interval is checked.
    pub metric: &'static str,
}

/// The configurations of the study: growth that clearly helps, growth with an effect near
/// zero, and the recall of two rare classes (18 and 12 rows).
pub fn worlds() -> Vec<World> {
    vec![
        World {
            name: "helps (balanced accuracy)",
            sizes: vec![220, 160, 110, 80, 18, 12],
            dims: 24,
            spread: 0.55,
            method: MethodKind::Interpolate,
            target: Target::Median,
            only: None,
            metric: "balanced_accuracy",
        },
        World {
            name: "near zero (balanced accuracy)",
            sizes: vec![190, 150, 120, 100, 80, 65],
            dims: 24,
            spread: 0.55,
            method: MethodKind::Interpolate,
            target: Target::Factor(1.2),
            only: None,
            metric: "balanced_accuracy",
        },
        World {
            name: "rare-class recall",
            sizes: vec![220, 160, 110, 80, 18, 12],
            dims: 24,
            spread: 0.45,
            method: MethodKind::Interpolate,
            target: Target::Median,
            only: Some(vec!["c4".into(), "c5".into()]),
            metric: "grown_class_recall",
        },
    ]
}

fn class_names(w: &World) -> Vec<String> {
    (0..w.sizes.len()).map(|c| format!("c{c}")).collect()
}

/// The class means of a world (fixed by its name, so every run sees the same world).
fn means(w: &World) -> Array2<f64> {
    let mut rng = ChaCha8Rng::seed_from_u64(embloom::seed::tag(w.name));
    Array2::from_shape_fn((w.sizes.len(), w.dims), |_| {
        w.spread * rng.sample::<f64, _>(StandardNormal)
    })
}

fn sample(w: &World, mu: &Array2<f64>, sizes: &[usize], rng: &mut ChaCha8Rng) -> Dataset {
    let n: usize = sizes.iter().sum();
    let mut x = Array2::<f32>::zeros((n, w.dims));
    let mut labels = Vec::with_capacity(n);
    let mut i = 0;
    for (c, &m) in sizes.iter().enumerate() {
        for _ in 0..m {
            for j in 0..w.dims {
                x[[i, j]] = (mu[[c, j]] + rng.sample::<f64, _>(StandardNormal)) as f32;
            }
            labels.push(c as u32);
            i += 1;
        }
    }
    Dataset::new(x, labels, class_names(w))
}

fn knn_params() -> KnnParams {
    KnnParams {
        k: 10,
        metric: Metric::Euclidean,
        ..KnnParams::default()
    }
}

/// The expected difference and its Monte Carlo standard error.
#[derive(Debug, Clone, Copy)]
pub struct Truth {
    pub delta: f64,
    pub mc_se: f64,
}

/// Truth by Monte Carlo over `train_sets` fresh training sets of the size a fold of `folds`
/// trains on, each scored on `test_per_class` fresh rows per class.
pub fn truth(
    w: &World,
    folds: usize,
    train_sets: usize,
    test_per_class: usize,
    seed: u64,
) -> Truth {
    let mu = means(w);
    let names = class_names(w);
    let only: Option<Vec<u32>> = w.only.as_ref().map(|o| {
        o.iter()
            .map(|n| names.iter().position(|c| c == n).unwrap() as u32)
            .collect()
    });
    let probe = KnnProbe::new(knn_params()).unwrap();
    let aug = augment::build(w.method, &AugmentParams::default()).unwrap();
    let deltas: Vec<f64> = (0..train_sets)
        .into_par_iter()
        .map(|t| {
            let mut rng = ChaCha8Rng::seed_from_u64(seed ^ (t as u64).wrapping_mul(0x9e37_79b9));
            // A stratified fold tests ⌊s/k⌋ or ⌈s/k⌉ rows of a class of s rows; draw the
            // training size as the folds produce it.
            let train_sizes: Vec<usize> = w
                .sizes
                .iter()
                .map(|&s| {
                    let per = s as f64 / folds as f64;
                    let extra = usize::from(rng.r#gen::<f64>() < per.fract());
                    s - per.floor() as usize - extra
                })
                .collect();
            let train = sample(w, &mu, &train_sizes, &mut rng);
            let test = sample(w, &mu, &vec![test_per_class; w.sizes.len()], &mut rng);
            let plan = Plan::new(&train.class_counts(), w.target, only.as_deref());
            let grown_classes = plan.grown_classes();
            let grown = augment::grow(&train, aug.as_ref(), &plan, false, t as u64, &[1]).unwrap();
            let score = |x: &Array2<f32>, y: &[u32]| {
                let nn = neighbors::knn(test.view(), x.view(), 10, Metric::Euclidean);
                let pred = probe.predict_from_neighbours(&nn, y, w.sizes.len());
                let recall = |c: u32| {
                    let (hit, all) = test
                        .labels
                        .iter()
                        .zip(&pred)
                        .filter(|(t, _)| **t == c)
                        .fold((0.0, 0.0), |(h, a), (t, p)| {
                            (h + f64::from(u8::from(t == p)), a + 1.0)
                        });
                    hit / all
                };
                let classes: Vec<u32> = if w.metric == "grown_class_recall" {
                    grown_classes.clone()
                } else {
                    (0..w.sizes.len() as u32).collect()
                };
                classes.iter().map(|&c| recall(c)).sum::<f64>() / classes.len() as f64
            };
            let x = concatenate(Axis(0), &[train.x.view(), grown.x.view()]).unwrap();
            let y: Vec<u32> = train.labels.iter().chain(&grown.labels).copied().collect();
            score(&x, &y) - score(&train.x, &train.labels)
        })
        .collect();
    let n = deltas.len() as f64;
    let mean = deltas.iter().sum::<f64>() / n;
    let var = deltas.iter().map(|d| (d - mean).powi(2)).sum::<f64>() / (n - 1.0);
    Truth {
        delta: mean,
        mc_se: (var / n).sqrt(),
    }
}

/// What one interval kind did over the simulated data sets.
#[derive(Debug, Clone)]
pub struct Tally {
    pub kind: IntervalKind,
    pub datasets: usize,
    /// Data sets that got an interval.
    pub with_interval: usize,
    pub covered: usize,
    /// Intervals that exclude zero.
    pub rejected: usize,
    pub width_sum: f64,
    pub estimates: Vec<f64>,
    /// Intervals printed with zero width or p of exactly 0 or 1 (must stay 0).
    pub degenerate_printed: usize,
}

impl Tally {
    pub fn coverage(&self) -> f64 {
        self.covered as f64 / self.with_interval.max(1) as f64
    }
    pub fn rejection(&self) -> f64 {
        self.rejected as f64 / self.with_interval.max(1) as f64
    }
    /// Mean printed width ÷ (2 · 1.96 · spread of the point estimates across data sets).
    pub fn width_ratio(&self) -> f64 {
        let n = self.estimates.len() as f64;
        let m = self.estimates.iter().sum::<f64>() / n;
        let sd = (self.estimates.iter().map(|e| (e - m).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
        (self.width_sum / self.with_interval.max(1) as f64) / (2.0 * 1.96 * sd)
    }
    /// Mean point estimate minus the truth.
    pub fn bias(&self, truth: f64) -> f64 {
        self.estimates.iter().sum::<f64>() / self.estimates.len() as f64 - truth
    }
    pub fn coverage_interval(&self) -> (f64, f64) {
        wilson(self.covered, self.with_interval)
    }
}

/// Wilson score interval for k successes in n at 95% (Wilson 1927).
pub fn wilson(k: usize, n: usize) -> (f64, f64) {
    if n == 0 {
        return (f64::NAN, f64::NAN);
    }
    let z = 1.959_963_984_540_054;
    let (k, n) = (k as f64, n as f64);
    let p = k / n;
    let centre = (p + z * z / (2.0 * n)) / (1.0 + z * z / n);
    let half = z / (1.0 + z * z / n) * (p * (1.0 - p) / n + z * z / (4.0 * n * n)).sqrt();
    (centre - half, centre + half)
}

/// What one summary row printed: estimate, bounds, p-value, whether it has an interval.
type Printed = (f64, f64, f64, f64, bool);

/// The configuration every simulated data set of `w` is assessed with.
fn assess_config(w: &World, folds: usize, repeats: usize, seed: u64) -> AssessConfig {
    AssessConfig {
        methods: vec![MethodKind::None, w.method],
        probes: vec![ProbeKind::Knn],
        folds,
        repeats,
        target: w.target,
        classes: w.only.clone(),
        augment: AugmentParams::default(),
        unit_norm: UnitNorm::Off,
        knn: knn_params(),
        linear: LinearParams::default(),
        interval: IntervalKind::default(),
        seed,
        diagnostics: false,
    }
    .validated()
    .unwrap()
}

/// Simulated data set `i` of `w` (the same draw in `run` and `outcomes`).
fn dataset(w: &World, mu: &Array2<f64>, i: usize, seed: u64) -> Dataset {
    let mut rng = ChaCha8Rng::seed_from_u64(seed.wrapping_add(1_000_003 * i as u64 + 17));
    sample(w, mu, &w.sizes, &mut rng)
}

/// Every test row's outcome in `datasets` simulated data sets of `w`, as CSV lines
/// `dataset,repeat,fold,train_real,row,label,method_pred,baseline_pred`: the raw material of
/// `intervals_decompose.py`, which splits the variance of the estimate into the part the
/// test rows explain and the part they do not, and evaluates interval formulas on it.
pub fn outcomes(
    w: &World,
    datasets: usize,
    folds: usize,
    repeats: usize,
    seed: u64,
) -> Vec<String> {
    let mu = means(w);
    let cfg = assess_config(w, folds, repeats, seed);
    (0..datasets)
        .into_par_iter()
        .map(|i| {
            let ds = dataset(w, &mu, i, seed);
            let mut c = cfg.clone();
            c.seed = seed.wrapping_add(i as u64);
            let res = assess(&ds, &c, InputInfo::in_memory("simulated", &ds)).unwrap();
            let mut s = String::new();
            for b in res.folds.iter().filter(|r| r.method.name() == "none") {
                let m = res
                    .folds
                    .iter()
                    .find(|r| r.method.name() != "none" && r.repeat == b.repeat && r.fold == b.fold)
                    .unwrap();
                let (bo, mo) = (&b.outcome, &m.outcome);
                for j in 0..bo.rows.len() {
                    s.push_str(&format!(
                        "{i},{},{},{},{},{},{},{}\n",
                        b.repeat,
                        b.fold,
                        b.train_real,
                        bo.rows[j],
                        bo.labels[j],
                        mo.pred[j],
                        bo.pred[j]
                    ));
                }
            }
            s
        })
        .collect()
}

/// Assess `datasets` simulated data sets of `w` and tally every interval kind against `truth`.
pub fn run(
    w: &World,
    truth: Truth,
    datasets: usize,
    folds: usize,
    repeats: usize,
    seed: u64,
) -> Vec<Tally> {
    let mu = means(w);
    let cfg = assess_config(w, folds, repeats, seed);
    let method = w.method.name().to_string();
    let per_dataset: Vec<Vec<Printed>> = (0..datasets)
        .into_par_iter()
        .map(|i| {
            let ds = dataset(w, &mu, i, seed);
            let info = InputInfo::in_memory("simulated", &ds);
            let mut c = cfg.clone();
            c.seed = seed.wrapping_add(i as u64);
            let res = assess(&ds, &c, info).unwrap();
            IntervalKind::ALL
                .iter()
                .map(|&k| {
                    let rows = summary_with(&res, k);
                    let r = rows
                        .iter()
                        .find(|r| r.method == method && r.metric == w.metric)
                        .unwrap();
                    (
                        r.delta_mean,
                        r.delta_ci_low,
                        r.delta_ci_high,
                        r.p_value,
                        r.no_interval.is_none(),
                    )
                })
                .collect()
        })
        .collect();
    IntervalKind::ALL
        .iter()
        .enumerate()
        .map(|(j, &kind)| {
            let mut t = Tally {
                kind,
                datasets,
                with_interval: 0,
                covered: 0,
                rejected: 0,
                width_sum: 0.0,
                estimates: Vec::new(),
                degenerate_printed: 0,
            };
            for d in &per_dataset {
                let (est, lo, hi, p, has) = d[j];
                if est.is_finite() {
                    t.estimates.push(est);
                }
                if !has {
                    if lo.is_finite() || p.is_finite() {
                        t.degenerate_printed += 1;
                    }
                    continue;
                }
                if hi.partial_cmp(&lo) != Some(std::cmp::Ordering::Greater) || p <= 0.0 {
                    t.degenerate_printed += 1;
                }
                t.with_interval += 1;
                t.width_sum += hi - lo;
                t.covered += usize::from(lo <= truth.delta && truth.delta <= hi);
                t.rejected += usize::from(lo > 0.0 || hi < 0.0);
            }
            t
        })
        .collect()
}
