//! The splits of the assessment: stratified k-fold, stratified group k-fold, or the folds the
//! user gave. The protocol owns the splits so that every augmenter is fitted on the training
//! rows of a fold only, and a group (a patient, a source image, a recording session) never
//! straddles train and test — otherwise near-duplicates leak and every method looks better.

use std::collections::HashMap;

use rand::seq::SliceRandom;
use serde::{Deserialize, Serialize};

use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::seed::{self, tag};

/// How the folds were made.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum SplitKind {
    /// Per-class round-robin dealing of shuffled rows.
    Stratified,
    /// Whole groups assigned to folds, balancing per-class counts.
    StratifiedGroup,
    /// The fold column of the input, as given.
    Given,
}

impl SplitKind {
    /// The name in results and reports (the serde spelling).
    pub fn name(self) -> &'static str {
        match self {
            SplitKind::Stratified => "stratified",
            SplitKind::StratifiedGroup => "stratified-group",
            SplitKind::Given => "given",
        }
    }
}

impl std::fmt::Display for SplitKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

/// One train/test split. `train` and `test` are sorted row indices into the dataset.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Fold {
    /// Which repeat of the fold scheme (0-based).
    pub repeat: usize,
    /// Position of the fold within its repeat (0-based).
    pub index: usize,
    /// Training rows, sorted.
    pub train: Vec<usize>,
    /// Test rows, sorted.
    pub test: Vec<usize>,
}

/// Folds for `ds`: the given fold column if there is one, else stratified group k-fold if
/// rows carry groups, else stratified k-fold. `k` and `seed` are not used for given folds.
/// Within each repeat every row is in exactly one test fold.
///
/// A class with fewer rows (or groups) than `k` is allowed: it is simply absent from some test
/// folds. [`thin_classes`] names such classes so the caller can warn.
pub fn make_folds(
    ds: &Dataset,
    k: usize,
    repeats: usize,
    seed: u64,
) -> Result<(SplitKind, Vec<Fold>)> {
    let n = ds.n_rows();
    if ds.labels.len() != n {
        return Err(Error::data(
            format!("{} labels for {} rows", ds.labels.len(), n),
            "give exactly one label per embedding row",
        ));
    }
    if present_classes(&ds.labels) < 2 {
        return Err(Error::data(
            "the data hold fewer than two classes, so there is nothing for a probe to tell apart",
            "assess on data with at least two classes",
        ));
    }
    if repeats == 0 {
        return Err(Error::param(
            "repeats",
            "0 repeats make no folds",
            "use at least 1 repeat",
        ));
    }
    if let Some(given) = &ds.folds {
        if given.len() != n {
            return Err(Error::data(
                format!("{} fold values for {} rows", given.len(), n),
                "give exactly one fold value per embedding row",
            ));
        }
        if repeats != 1 {
            return Err(Error::param(
                "repeats",
                format!(
                    "{repeats} repeats were asked for, but the folds are given by the input and would be the same in every repeat"
                ),
                "use 1 repeat with given folds, or drop the fold column to let embloom make repeated splits",
            ));
        }
        return Ok((SplitKind::Given, given_folds(given)?));
    }
    if k < 2 {
        return Err(Error::param(
            "k",
            format!("{k} folds cannot hold rows out"),
            "use at least 2 folds",
        ));
    }
    let mut folds = Vec::with_capacity(k * repeats);
    if let Some(groups) = &ds.groups {
        if groups.len() != n {
            return Err(Error::data(
                format!("{} group values for {} rows", groups.len(), n),
                "give exactly one group value per embedding row",
            ));
        }
        let (group_of, n_groups) = group_indices(groups);
        if k > n_groups {
            return Err(Error::param(
                "k",
                format!(
                    "{k} folds but only {n_groups} groups; a group is never split, so some test folds would be empty"
                ),
                format!("use at most {n_groups} folds"),
            ));
        }
        for r in 0..repeats {
            let fold_of_group = assign_groups(&group_of, n_groups, &ds.labels, k, seed, r);
            let fold_of_row: Vec<usize> = group_of.iter().map(|&g| fold_of_group[g]).collect();
            folds.extend(folds_from_assignment(&fold_of_row, k, r));
        }
        Ok((SplitKind::StratifiedGroup, folds))
    } else {
        if k > n {
            return Err(Error::param(
                "k",
                format!("{k} folds but only {n} rows; some test folds would be empty"),
                format!("use at most {n} folds"),
            ));
        }
        for r in 0..repeats {
            let fold_of_row = deal_stratified(&ds.labels, k, seed, r);
            folds.extend(folds_from_assignment(&fold_of_row, k, r));
        }
        Ok((SplitKind::Stratified, folds))
    }
}

/// Classes present in `ds` that cannot appear in every test fold: fewer than `k` rows
/// (stratified), fewer than `k` distinct groups (grouped), or absent from some given fold
/// (given folds; `k` is then not used). Sorted by class index.
pub fn thin_classes(ds: &Dataset, k: usize) -> Vec<u32> {
    let n_classes = ds.labels.iter().map(|&l| l as usize + 1).max().unwrap_or(0);
    // Distinct "units" (rows, groups or given folds) in which each class appears.
    let (units, needed): (Vec<usize>, usize) =
        if let Some(f) = ds.folds.as_ref().filter(|f| f.len() == ds.labels.len()) {
            let mut distinct: Vec<i64> = f.clone();
            distinct.sort_unstable();
            distinct.dedup();
            let mut seen = vec![std::collections::BTreeSet::new(); n_classes];
            for (&l, &v) in ds.labels.iter().zip(f) {
                seen[l as usize].insert(v);
            }
            (seen.iter().map(|s| s.len()).collect(), distinct.len())
        } else if let Some(g) = ds.groups.as_ref().filter(|g| g.len() == ds.labels.len()) {
            let (group_of, _) = group_indices(g);
            let mut seen = vec![std::collections::BTreeSet::new(); n_classes];
            for (&l, &gi) in ds.labels.iter().zip(&group_of) {
                seen[l as usize].insert(gi);
            }
            (seen.iter().map(|s| s.len()).collect(), k)
        } else {
            let mut counts = vec![0usize; n_classes];
            for &l in &ds.labels {
                counts[l as usize] += 1;
            }
            (counts, k)
        };
    units
        .iter()
        .enumerate()
        .filter(|&(_, &u)| u > 0 && u < needed)
        .map(|(c, _)| c as u32)
        .collect()
}

fn present_classes(labels: &[u32]) -> usize {
    let mut l = labels.to_vec();
    l.sort_unstable();
    l.dedup();
    l.len()
}

/// Each distinct fold value (sorted) is one test fold.
fn given_folds(given: &[i64]) -> Result<Vec<Fold>> {
    let mut values = given.to_vec();
    values.sort_unstable();
    values.dedup();
    if values.len() < 2 {
        return Err(Error::data(
            format!(
                "the fold column holds {} distinct value(s); at least 2 are needed to hold rows out",
                values.len()
            ),
            "give at least two distinct fold values, or drop the fold column to let embloom make folds",
        ));
    }
    let fold_of_row: Vec<usize> = given
        .iter()
        .map(|v| values.binary_search(v).unwrap_or_default())
        .collect();
    Ok(folds_from_assignment(&fold_of_row, values.len(), 0))
}

/// Group index per row (first-seen order) and the number of groups.
fn group_indices(groups: &[String]) -> (Vec<usize>, usize) {
    let mut index: HashMap<&str, usize> = HashMap::new();
    let of: Vec<usize> = groups
        .iter()
        .map(|g| {
            let next = index.len();
            *index.entry(g.as_str()).or_insert(next)
        })
        .collect();
    (of, index.len())
}

/// Stratified k-fold: each class's rows are shuffled on their own stream and dealt round-robin,
/// so every test fold holds ⌊n_c/k⌋ or ⌈n_c/k⌉ rows of class c. Each class starts dealing where
/// the previous class stopped, so overall fold sizes also differ by at most one row.
fn deal_stratified(labels: &[u32], k: usize, seed: u64, repeat: usize) -> Vec<usize> {
    let n_classes = labels.iter().map(|&l| l as usize + 1).max().unwrap_or(0);
    let mut rows_of: Vec<Vec<usize>> = vec![Vec::new(); n_classes];
    for (i, &l) in labels.iter().enumerate() {
        rows_of[l as usize].push(i);
    }
    let mut fold_of_row = vec![0usize; labels.len()];
    let mut next = 0usize;
    for (c, rows) in rows_of.iter_mut().enumerate() {
        let mut rng = seed::stream(seed, &[tag("stratified-folds"), repeat as u64, c as u64]);
        rows.shuffle(&mut rng);
        for &i in rows.iter() {
            fold_of_row[i] = next;
            next = (next + 1) % k;
        }
    }
    fold_of_row
}

/// Stratified group k-fold, greedy: groups are shuffled (seeded, per repeat), then ordered by
/// size descending (stable, so equal sizes keep the shuffled order), and each goes to the fold
/// where it least increases Σ_f Σ_c (count_fc − total_c/k)². Ties go to the fold with fewer
/// rows, then the lower index; an empty fold always wins such a tie, so every fold gets a group.
fn assign_groups(
    group_of: &[usize],
    n_groups: usize,
    labels: &[u32],
    k: usize,
    seed: u64,
    repeat: usize,
) -> Vec<usize> {
    let n_classes = labels.iter().map(|&l| l as usize + 1).max().unwrap_or(0);
    let mut per_group = vec![vec![0i64; n_classes]; n_groups];
    let mut total = vec![0i64; n_classes];
    for (&g, &l) in group_of.iter().zip(labels) {
        per_group[g][l as usize] += 1;
        total[l as usize] += 1;
    }
    let size = |g: usize| per_group[g].iter().sum::<i64>();
    let mut order: Vec<usize> = (0..n_groups).collect();
    let mut rng = seed::stream(seed, &[tag("group-folds"), repeat as u64]);
    order.shuffle(&mut rng);
    order.sort_by_key(|&g| std::cmp::Reverse(size(g)));

    let kk = k as i64;
    let mut counts = vec![vec![0i64; n_classes]; k];
    let mut fold_rows = vec![0i64; k];
    let mut fold_of_group = vec![0usize; n_groups];
    for g in order {
        let gc = &per_group[g];
        // k × (increase of the squared deviation), exact in integers:
        // Σ_c k·g_c² + 2·g_c·(k·a_fc − total_c).
        let best = (0..k)
            .min_by_key(|&f| {
                let delta: i64 = gc
                    .iter()
                    .zip(&counts[f])
                    .zip(&total)
                    .map(|((&g_c, &a), &t)| kk * g_c * g_c + 2 * g_c * (kk * a - t))
                    .sum();
                (delta, fold_rows[f], f)
            })
            .unwrap_or(0);
        for (a, &g_c) in counts[best].iter_mut().zip(gc) {
            *a += g_c;
        }
        fold_rows[best] += size(g);
        fold_of_group[g] = best;
    }
    fold_of_group
}

fn folds_from_assignment(fold_of_row: &[usize], k: usize, repeat: usize) -> Vec<Fold> {
    (0..k)
        .map(|f| {
            let (test, train): (Vec<usize>, Vec<usize>) =
                (0..fold_of_row.len()).partition(|&i| fold_of_row[i] == f);
            Fold {
                repeat,
                index: f,
                train,
                test,
            }
        })
        .collect()
}
