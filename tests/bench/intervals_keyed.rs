//! Experiment: the delete-a-group jackknife when growing draws its random numbers keyed by
//! row identity (common random numbers), so that a replicate without some rows redraws only
//! the synthetic rows whose base or partner it lost.
//!
//! Growing here is SMOTE's rule (Chawla et al. 2002) written out in the experiment, not the
//! library's `interpolate`: synthetic row j of class c takes as base the class row whose key
//! hash(salt, c, j, row id) is smallest (consistent hashing: deleting a row changes only the
//! draws it had won), as partner the one of the base's 5 nearest same-class rows whose key
//! hash(hash(salt, c, j), row id) is smallest, and u from hash(salt, c, j) as well. The truth is computed with the same
//! rule, so the experiment asks only whether keyed draws let the jackknife see training-set
//! variance without counting augmentation noise (G − 1)²/G times.

use crate::sim::{self, Trial, Truth, World};
use embloom::Dataset;
use embloom::augment::Plan;
use embloom::neighbors::{self, Metric};
use embloom::probe::KnnProbe;
use ndarray::Array2;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;

const PARTNERS: usize = 5;

/// SplitMix64's finaliser folded over `parts`.
fn key(parts: &[u64]) -> u64 {
    let mut h = 0x9e37_79b9_7f4a_7c15u64;
    for &p in parts {
        let mut z = h ^ p.wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        h = z ^ (z >> 31);
    }
    h
}

fn unit(h: u64) -> f32 {
    ((h >> 40) as f32) / (1u64 << 24) as f32
}

fn sq_dist(x: &Array2<f32>, a: usize, b: usize) -> f32 {
    x.row(a)
        .iter()
        .zip(x.row(b).iter())
        .map(|(p, q)| (p - q) * (p - q))
        .sum()
}

/// Keyed SMOTE rows for the training rows `train` of `ds`, `add[c]` per class.
fn keyed_rows(ds: &Dataset, train: &[usize], add: &[usize], salt: u64) -> (Vec<f32>, Vec<u32>) {
    let d = ds.dims();
    let (mut rows, mut labels) = (Vec::new(), Vec::new());
    for (c, &a) in add.iter().enumerate() {
        let members: Vec<usize> = train
            .iter()
            .copied()
            .filter(|&r| ds.labels[r] == c as u32)
            .collect();
        if a == 0 || members.len() < 2 {
            continue;
        }
        let mut partners: Vec<Option<Vec<usize>>> = vec![None; members.len()];
        for j in 0..a as u64 {
            let b = (0..members.len())
                .min_by_key(|&m| key(&[salt, c as u64, j, members[m] as u64]))
                .unwrap();
            let nb = partners[b].get_or_insert_with(|| {
                let mut others: Vec<usize> = members
                    .iter()
                    .copied()
                    .filter(|&r| r != members[b])
                    .collect();
                others.sort_by(|&p, &q| {
                    sq_dist(&ds.x, members[b], p)
                        .total_cmp(&sq_dist(&ds.x, members[b], q))
                        .then(p.cmp(&q))
                });
                others.truncate(PARTNERS);
                others
            });
            let h = key(&[salt, c as u64, j, u64::MAX]);
            let p = *nb.iter().min_by_key(|&&r| key(&[h, r as u64])).unwrap();
            let u = unit(key(&[h]));
            let (xb, xp) = (ds.x.row(members[b]), ds.x.row(p));
            rows.extend((0..d).map(|k| xb[k] + u * (xp[k] - xb[k])));
            labels.push(c as u32);
        }
    }
    (rows, labels)
}

/// Per-class hits of the grown and the real-only k-NN probe on `test`, and the class counts.
fn fold_hits(ds: &Dataset, w: &World, train: &[usize], test: &[usize], salt: u64) -> [Vec<f64>; 3] {
    let c = w.sizes.len();
    let mut counts = vec![0usize; c];
    for &r in train {
        counts[ds.labels[r] as usize] += 1;
    }
    let only = sim::only_classes(w);
    let plan = Plan::new(&counts, w.target, only.as_deref());
    let (syn, syn_y) = keyed_rows(ds, train, &plan.add, salt);
    let real = ds.x.select(ndarray::Axis(0), train);
    let real_y: Vec<u32> = train.iter().map(|&r| ds.labels[r]).collect();
    let grown = ndarray::concatenate(
        ndarray::Axis(0),
        &[
            real.view(),
            Array2::from_shape_vec((syn_y.len(), ds.dims()), syn)
                .unwrap()
                .view(),
        ],
    )
    .unwrap();
    let grown_y: Vec<u32> = real_y.iter().chain(&syn_y).copied().collect();
    let q = ds.x.select(ndarray::Axis(0), test);
    let probe = KnnProbe::new(sim::knn_params()).unwrap();
    let predict = |base: &Array2<f32>, y: &[u32]| {
        let nn = neighbors::knn(q.view(), base.view(), 10, Metric::Euclidean);
        probe.predict_from_neighbours(&nn, y, c)
    };
    let (pm, pb) = (predict(&grown, &grown_y), predict(&real, &real_y));
    let mut out = [vec![0.0; c], vec![0.0; c], vec![0.0; c]];
    for (i, &r) in test.iter().enumerate() {
        let y = ds.labels[r];
        out[0][y as usize] += f64::from(u8::from(pm[i] == y));
        out[1][y as usize] += f64::from(u8::from(pb[i] == y));
        out[2][y as usize] += 1.0;
    }
    out
}

/// The figure's delta from pooled per-class hits.
fn figure(w: &World, hits: &[Vec<f64>; 3], grown: &[u32]) -> f64 {
    let classes: Vec<usize> = if w.metric == "grown_class_recall" {
        grown.iter().map(|&c| c as usize).collect()
    } else {
        (0..w.sizes.len()).filter(|&c| hits[2][c] > 0.0).collect()
    };
    classes
        .iter()
        .map(|&c| (hits[0][c] - hits[1][c]) / hits[2][c])
        .sum::<f64>()
        / classes.len() as f64
}

/// The cross-validated delta of `ds` restricted to `keep`, over the fold columns.
fn estimate(w: &World, ds: &Dataset, keep: &[usize], cols: &[Vec<i64>], salt: u64) -> f64 {
    let grown = Plan::new(
        &ds.class_counts(),
        w.target,
        sim::only_classes(w).as_deref(),
    )
    .grown_classes();
    let mut total = 0.0;
    for (r, col) in cols.iter().enumerate() {
        let c = w.sizes.len();
        let mut hits = [vec![0.0; c], vec![0.0; c], vec![0.0; c]];
        let folds = col.iter().copied().max().unwrap_or(0) + 1;
        for f in 0..folds {
            let test: Vec<usize> = keep.iter().copied().filter(|&i| col[i] == f).collect();
            let train: Vec<usize> = keep.iter().copied().filter(|&i| col[i] != f).collect();
            let h = fold_hits(ds, w, &train, &test, key(&[salt, r as u64, f as u64]));
            for k in 0..3 {
                for j in 0..c {
                    hits[k][j] += h[k][j];
                }
            }
        }
        total += figure(w, &hits, &grown);
    }
    total / cols.len() as f64
}

/// Truth under keyed growth: fresh training sets of a fold's size, large fresh test sets.
pub fn truth(w: &World, folds: usize, train_sets: usize, test_per_class: usize) -> Truth {
    let mu = sim::means(w);
    let deltas: Vec<f64> = (0..train_sets)
        .into_par_iter()
        .map(|t| {
            let mut rng = ChaCha8Rng::seed_from_u64(0xfeed ^ (t as u64).wrapping_mul(0x9e37_79b9));
            let sizes: Vec<usize> = w
                .sizes
                .iter()
                .map(|&s| {
                    let per = s as f64 / folds as f64;
                    s - per.floor() as usize - usize::from(rng.r#gen::<f64>() < per.fract())
                })
                .collect();
            let train = sim::sample(w, &mu, &sizes, &mut rng);
            let test = sim::sample(w, &mu, &vec![test_per_class; w.sizes.len()], &mut rng);
            let n_train = train.n_rows();
            let both = Dataset::new(
                ndarray::concatenate(ndarray::Axis(0), &[train.x.view(), test.x.view()]).unwrap(),
                train.labels.iter().chain(&test.labels).copied().collect(),
                train.classes.clone(),
            );
            let tr: Vec<usize> = (0..n_train).collect();
            let te: Vec<usize> = (n_train..both.n_rows()).collect();
            let hits = fold_hits(&both, w, &tr, &te, rng.r#gen());
            let grown =
                Plan::new(&sizes, w.target, sim::only_classes(w).as_deref()).grown_classes();
            figure(w, &hits, &grown)
        })
        .collect();
    Truth::of(&deltas)
}

/// The jackknife with keyed growth over `datasets` data sets: its tallies, the augmentation
/// noise (same data and folds, another salt) and the variance V of the estimate.
pub fn jackknife(
    w: &World,
    truth: Truth,
    datasets: usize,
    folds: usize,
    repeats: usize,
    groups: usize,
    seed: u64,
) -> (Vec<Trial>, f64, f64) {
    let mu = sim::means(w);
    // Per data set: the estimate under salts A and B, and each replicate's pair.
    type Replicates = Vec<(f64, f64)>;
    let per: Vec<(f64, f64, Replicates)> = (0..datasets)
        .into_par_iter()
        .map(|i| {
            let ds = sim::dataset(w, &mu, i, seed);
            let s = seed.wrapping_add(i as u64);
            let cols = sim::fold_columns(&ds, folds, repeats, s);
            let all: Vec<usize> = (0..ds.n_rows()).collect();
            let full = estimate(w, &ds, &all, &cols, s);
            let other = estimate(w, &ds, &all, &cols, s ^ 0xabcdef);
            let reps = sim::deletion_groups(&ds, groups, s)
                .iter()
                .map(|g| {
                    let keep: Vec<usize> = all.iter().copied().filter(|r| !g.contains(r)).collect();
                    (
                        estimate(w, &ds, &keep, &cols, s),
                        estimate(w, &ds, &keep, &cols, s ^ 0xabcdef),
                    )
                })
                .collect();
            (full, other, reps)
        })
        .collect();
    let mut t_t = Trial::named("keyed jackknife t(G-1)");
    let mut t_z = Trial::named("keyed jackknife z");
    let mut t_d = Trial::named("two-salt jackknife z");
    let g = groups as f64;
    let tq = embloom::eval::t_quantile(0.975, g - 1.0);
    let jack = sim::jackknife_variance;
    let mut noise = 0.0;
    for (full, other, pairs) in &per {
        noise += (full - other).powi(2) / 2.0;
        let reps: Vec<f64> = pairs.iter().map(|p| p.0).collect();
        let sj = jack(&reps).sqrt();
        t_t.add(*full, full - tq * sj, full + tq * sj, truth.delta);
        t_z.add(*full, full - 1.96 * sj, full + 1.96 * sj, truth.delta);
        // Signal jackknife: J(mean of the two salts) − J(their difference)/4, unbiased for the
        // jackknife of the noise-free estimate; the noise of one estimate is added once.
        let avg: Vec<f64> = pairs.iter().map(|p| (p.0 + p.1) / 2.0).collect();
        let dif: Vec<f64> = pairs.iter().map(|p| p.0 - p.1).collect();
        let sigma2 = dif.iter().map(|d| d * d).sum::<f64>() / (2.0 * g);
        let sd = ((jack(&avg) - jack(&dif) / 4.0).max(0.0) + sigma2).sqrt();
        t_d.add(*full, full - 1.96 * sd, full + 1.96 * sd, truth.delta);
    }
    let fulls: Vec<f64> = per.iter().map(|p| p.0).collect();
    let v = sim::mean_var(&fulls).1;
    (vec![t_t, t_z, t_d], noise / fulls.len() as f64, v)
}
