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

pub fn class_names(w: &World) -> Vec<String> {
    (0..w.sizes.len()).map(|c| format!("c{c}")).collect()
}

/// The class indices growth is limited to, if any.
pub fn only_classes(w: &World) -> Option<Vec<u32>> {
    let names = class_names(w);
    w.only.as_ref().map(|o| {
        o.iter()
            .map(|n| names.iter().position(|c| c == n).unwrap() as u32)
            .collect()
    })
}

/// The class means of a world (fixed by its name, so every run sees the same world).
pub fn means(w: &World) -> Array2<f64> {
    let mut rng = ChaCha8Rng::seed_from_u64(embloom::seed::tag(w.name));
    Array2::from_shape_fn((w.sizes.len(), w.dims), |_| {
        w.spread * rng.sample::<f64, _>(StandardNormal)
    })
}

pub fn sample(w: &World, mu: &Array2<f64>, sizes: &[usize], rng: &mut ChaCha8Rng) -> Dataset {
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

pub fn knn_params() -> KnnParams {
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

/// The arithmetic mean and the sample variance (n − 1 in the denominator) of `v`.
pub fn mean_var(v: &[f64]) -> (f64, f64) {
    let n = v.len() as f64;
    let m = v.iter().sum::<f64>() / n;
    (
        m,
        v.iter().map(|e| (e - m).powi(2)).sum::<f64>() / (n - 1.0),
    )
}

impl Truth {
    /// The mean of Monte Carlo draws of the difference, with its standard error.
    pub fn of(deltas: &[f64]) -> Truth {
        let (delta, var) = mean_var(deltas);
        Truth {
            delta,
            mc_se: (var / deltas.len() as f64).sqrt(),
        }
    }
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
    let only = only_classes(w);
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
    Truth::of(&deltas)
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
        let sd = mean_var(&self.estimates).1.sqrt();
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
pub fn dataset(w: &World, mu: &Array2<f64>, i: usize, seed: u64) -> Dataset {
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

/// The library's fold index of every row, per repeat, for `assess` on `ds` with `seed`.
pub fn fold_columns(ds: &Dataset, folds: usize, repeats: usize, seed: u64) -> Vec<Vec<i64>> {
    let (_, made) = embloom::eval::make_folds(ds, folds, repeats, seed).unwrap();
    let mut cols = vec![vec![0i64; ds.n_rows()]; repeats];
    for f in &made {
        for &r in &f.test {
            cols[f.repeat][r] = f.index as i64;
        }
    }
    cols
}

/// The pooled estimate of `w`'s figure on `ds` restricted to `keep`, over the given fold
/// columns (one assessment per column, averaged), augmentation seeded by `seed`.
fn estimate_on(
    w: &World,
    ds: &Dataset,
    keep: &[usize],
    cols: &[Vec<i64>],
    folds: usize,
    seed: u64,
) -> f64 {
    let method = w.method.name().to_string();
    let mut sum = 0.0;
    for (r, col) in cols.iter().enumerate() {
        let mut sub = ds.select(keep);
        sub.folds = Some(keep.iter().map(|&i| col[i]).collect());
        let mut c = assess_config(w, folds, 1, seed);
        c.seed = seed.wrapping_add(7919 * r as u64);
        let res = assess(&sub, &c, InputInfo::in_memory("simulated", &sub)).unwrap();
        let rows = summary_with(&res, IntervalKind::CvClt);
        let row = rows
            .iter()
            .find(|x| x.method == method && x.metric == w.metric)
            .unwrap();
        sum += row.delta_mean;
    }
    sum / cols.len() as f64
}

/// Deletion groups: each class's rows dealt round-robin over `g` groups from a random offset.
pub fn deletion_groups(ds: &Dataset, g: usize, seed: u64) -> Vec<Vec<usize>> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed ^ 0x5151);
    let mut groups = vec![Vec::new(); g];
    for c in 0..ds.n_classes() as u32 {
        let mut rows = ds.rows_of_class(c);
        for i in (1..rows.len()).rev() {
            rows.swap(i, rng.gen_range(0..=i));
        }
        let off = rng.gen_range(0..g);
        for (j, r) in rows.into_iter().enumerate() {
            groups[(j + off) % g].push(r);
        }
    }
    groups
}

/// One experimental interval's tally.
#[derive(Debug, Clone, Default)]
pub struct Trial {
    pub name: String,
    pub n: usize,
    pub covered: usize,
    pub rejected: usize,
    pub width_sum: f64,
    pub estimates: Vec<f64>,
}

impl Trial {
    pub fn named(name: &str) -> Trial {
        Trial {
            name: name.into(),
            ..Default::default()
        }
    }
    pub fn add(&mut self, est: f64, lo: f64, hi: f64, truth: f64) {
        self.n += 1;
        self.covered += usize::from(lo <= truth && truth <= hi);
        self.rejected += usize::from(lo > 0.0 || hi < 0.0);
        self.width_sum += hi - lo;
        self.estimates.push(est);
    }
    pub fn line(&self) -> String {
        let sd = mean_var(&self.estimates).1.sqrt();
        let (lo, hi) = wilson(self.covered, self.n);
        format!(
            "{:<28} cov {:.3} [{:.3},{:.3}] rej {:.3} width {:.2}",
            self.name,
            self.covered as f64 / self.n as f64,
            lo,
            hi,
            self.rejected as f64 / self.n as f64,
            self.width_sum / self.n as f64 / (2.0 * 1.96 * sd)
        )
    }
}

/// The delete-a-group jackknife variance (G − 1)/G · Σ(θ₍g₎ − θ̄)² of G replicates.
pub fn jackknife_variance(reps: &[f64]) -> f64 {
    let g = reps.len() as f64;
    let m = reps.iter().sum::<f64>() / g;
    (g - 1.0) / g * reps.iter().map(|r| (r - m).powi(2)).sum::<f64>()
}

/// Experiment: delete-a-group jackknife of the whole cross-validated estimate, and the
/// augmentation noise (same folds, another augmentation seed).
pub fn jackknife_trial(
    w: &World,
    truth: Truth,
    datasets: usize,
    folds: usize,
    repeats: usize,
    groups: usize,
    seed: u64,
) -> (Vec<Trial>, f64, f64) {
    let mu = means(w);
    let per: Vec<(f64, f64, f64, Vec<f64>)> = (0..datasets)
        .into_par_iter()
        .map(|i| {
            let ds = dataset(w, &mu, i, seed);
            let s = seed.wrapping_add(i as u64);
            let cols = fold_columns(&ds, folds, repeats, s);
            let all: Vec<usize> = (0..ds.n_rows()).collect();
            let full = estimate_on(w, &ds, &all, &cols, folds, s);
            let other = estimate_on(w, &ds, &all, &cols, folds, s ^ 0xabcdef);
            let reps: Vec<f64> = deletion_groups(&ds, groups, s)
                .iter()
                .map(|g| {
                    let keep: Vec<usize> = all.iter().copied().filter(|r| !g.contains(r)).collect();
                    estimate_on(w, &ds, &keep, &cols, folds, s)
                })
                .collect();
            let cfg = assess_config(w, folds, repeats, s);
            let res = assess(&ds, &cfg, InputInfo::in_memory("simulated", &ds)).unwrap();
            let rows = summary_with(&res, IntervalKind::CvClt);
            let r = rows
                .iter()
                .find(|x| x.method == w.method.name() && x.metric == w.metric)
                .unwrap();
            let se = (r.delta_ci_high - r.delta_ci_low) / (2.0 * 1.959_964);
            (full, other, se, reps)
        })
        .collect();
    let mut t_t = Trial::named("jackknife t(G-1)");
    let mut t_z = Trial::named("jackknife z");
    let mut t_max = Trial::named("max(clt, jackknife) z");
    let g = groups as f64;
    let tq = embloom::eval::t_quantile(0.975, g - 1.0);
    let mut noise = 0.0;
    for (full, other, se, reps) in &per {
        noise += (full - other).powi(2) / 2.0;
        let sj = jackknife_variance(reps).sqrt();
        t_t.add(*full, full - tq * sj, full + tq * sj, truth.delta);
        t_z.add(*full, full - 1.96 * sj, full + 1.96 * sj, truth.delta);
        let s = sj.max(*se);
        t_max.add(*full, full - 1.96 * s, full + 1.96 * s, truth.delta);
    }
    let fulls: Vec<f64> = per.iter().map(|p| p.0).collect();
    let v = mean_var(&fulls).1;
    (vec![t_t, t_z, t_max], noise / fulls.len() as f64, v)
}

/// Experiment: the whole cross-validated estimate recomputed on `boots` class-stratified
/// bootstrap resamples of the data set (copies of a row share a group, so they never sit on
/// both sides of a split), its spread across resamples as the standard error.
pub fn bootstrap_trial(
    w: &World,
    truth: Truth,
    datasets: usize,
    folds: usize,
    repeats: usize,
    boots: usize,
    seed: u64,
) -> Vec<Trial> {
    let mu = means(w);
    let method = w.method.name().to_string();
    // Per data set: (estimate, cv-clt SE) on the data, and on each resample.
    type EstimateSe = (f64, f64);
    let per: Vec<(EstimateSe, Vec<EstimateSe>)> = (0..datasets)
        .into_par_iter()
        .map(|i| {
            let ds = dataset(w, &mu, i, seed);
            let s = seed.wrapping_add(i as u64);
            let run = |d: &Dataset, sd: u64| {
                let cfg = assess_config(w, folds, repeats, sd);
                let res = assess(d, &cfg, InputInfo::in_memory("simulated", d)).unwrap();
                let rows = summary_with(&res, IntervalKind::CvClt);
                let r = rows
                    .iter()
                    .find(|x| x.method == method && x.metric == w.metric)
                    .unwrap();
                let se = (r.delta_ci_high - r.delta_ci_low) / (2.0 * 1.959_964);
                (r.delta_mean, if se.is_finite() { se } else { 0.0 })
            };
            let full = run(&ds, s);
            let mut rng = ChaCha8Rng::seed_from_u64(s ^ 0xb007);
            let reps = (0..boots)
                .map(|b| {
                    let mut pick = Vec::with_capacity(ds.n_rows());
                    for c in 0..ds.n_classes() as u32 {
                        let rows = ds.rows_of_class(c);
                        for _ in 0..rows.len() {
                            pick.push(rows[rng.gen_range(0..rows.len())]);
                        }
                    }
                    pick.sort_unstable();
                    let mut d = ds.select(&pick);
                    d.groups = Some(pick.iter().map(|r| r.to_string()).collect());
                    run(&d, s.wrapping_add(1 + b as u64))
                })
                .collect();
            (full, reps)
        })
        .collect();
    let mut t_z = Trial::named("whole-set bootstrap z");
    let mut t_p = Trial::named("whole-set bootstrap pct");
    let mut t_h = Trial::named("clt + boot excess z");
    let mut t_c = Trial::named("cv-clt z");
    for ((full, se), pairs) in &per {
        let reps: Vec<f64> = pairs.iter().map(|p| p.0).collect();
        let b = reps.len() as f64;
        let row_b = pairs.iter().map(|p| p.1 * p.1).sum::<f64>() / b;
        let vb = mean_var(&reps).1;
        let sh = (se * se + (vb - row_b).max(0.0)).sqrt();
        t_h.add(*full, full - 1.96 * sh, full + 1.96 * sh, truth.delta);
        t_c.add(*full, full - 1.96 * se, full + 1.96 * se, truth.delta);
        let sd = vb.sqrt();
        t_z.add(*full, full - 1.96 * sd, full + 1.96 * sd, truth.delta);
        let mut sorted = reps.clone();
        sorted.sort_by(f64::total_cmp);
        let q = |p: f64| sorted[((p * (b - 1.0)).round() as usize).min(reps.len() - 1)];
        // Basic (reflected) bootstrap interval.
        t_p.add(
            *full,
            2.0 * full - q(0.975),
            2.0 * full - q(0.025),
            truth.delta,
        );
    }
    vec![t_z, t_p, t_h, t_c]
}
