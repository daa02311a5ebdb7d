//! Which class a probe takes each test row for, counted per method and probe, and the
//! (true class, predicted class) cells whose count moved most against `none`.
//!
//! The counts are summed over every test fold of every repeat: a fold's counts alone are too
//! small to rank, and each repeat tests every row once, so a matrix sums to the test rows of
//! all its folds (rows × repeats under a full split). Kept sparse (only non-zero cells), since
//! a set of thousands of classes would otherwise carry millions of zeros per method.

use std::collections::{BTreeMap, BTreeSet};

use super::method_id::MethodId;
use super::probe_side::not_applicable;
use super::results::{Confusion, ConfusionChange, FoldRecord};
use crate::probe::ProbeKind;

/// Per method and probe, this many rises and this many falls are listed (the largest first).
pub const CHANGES_LISTED: usize = 10;

/// Sparse counts keyed by (true class, predicted class).
type Counts = BTreeMap<(u32, u32), u64>;

fn count(records: &[&FoldRecord]) -> (Counts, usize) {
    let mut counts = Counts::new();
    let mut rows = 0;
    for r in records {
        for (&t, &p) in r.outcome.labels.iter().zip(&r.outcome.pred) {
            *counts.entry((t, p)).or_default() += 1;
            rows += 1;
        }
    }
    (counts, rows)
}

/// The confusion counts of every method × probe that has results (probe by probe, methods in
/// run order, `none` included), and the largest changes of the off-diagonal cells against
/// `none`: per method × probe, up to [`CHANGES_LISTED`] rises (more rows of that true class
/// taken for that other class) then as many falls, each by decreasing size.
pub fn confusions(
    records: &[FoldRecord],
    methods: &[MethodId],
    probes: &[ProbeKind],
    classes: &[String],
) -> (Vec<Confusion>, Vec<ConfusionChange>) {
    let name = |c: u32| {
        classes
            .get(c as usize)
            .cloned()
            .unwrap_or_else(|| format!("class {c}"))
    };
    let mut matrices = Vec::new();
    let mut changes = Vec::new();
    for &probe in probes {
        let of = |m: &MethodId| -> Vec<&FoldRecord> {
            records
                .iter()
                .filter(|r| r.probe == probe && r.method == *m)
                .collect()
        };
        let Some(baseline) = methods.first() else {
            continue;
        };
        let (base, _) = count(&of(baseline));
        for method in methods {
            if not_applicable(method, probe).is_some() {
                continue;
            }
            let own = of(method);
            if own.is_empty() {
                continue;
            }
            let (counts, rows) = count(&own);
            if !method.is_baseline() {
                let cells: BTreeSet<(u32, u32)> =
                    counts.keys().chain(base.keys()).copied().collect();
                let mut moved: Vec<(i64, (u32, u32))> = cells
                    .into_iter()
                    .filter(|(t, p)| t != p)
                    .map(|cell| {
                        let get = |m: &Counts| m.get(&cell).copied().unwrap_or(0) as i64;
                        (get(&counts) - get(&base), cell)
                    })
                    .filter(|(d, _)| *d != 0)
                    .collect();
                moved.sort_by(|a, b| b.0.abs().cmp(&a.0.abs()).then(a.1.cmp(&b.1)));
                let rises = moved.iter().filter(|(d, _)| *d > 0).take(CHANGES_LISTED);
                let falls = moved.iter().filter(|(d, _)| *d < 0).take(CHANGES_LISTED);
                changes.extend(rises.chain(falls).map(|&(d, (t, p))| ConfusionChange {
                    method: method.clone(),
                    probe,
                    true_class: name(t),
                    predicted_class: name(p),
                    baseline_count: base.get(&(t, p)).copied().unwrap_or(0),
                    count: counts.get(&(t, p)).copied().unwrap_or(0),
                    change: d,
                }));
            }
            matrices.push(Confusion {
                method: method.clone(),
                probe,
                test_rows: rows,
                cells: counts
                    .into_iter()
                    .map(|((t, p), n)| [u64::from(t), u64::from(p), n])
                    .collect(),
            });
        }
    }
    (matrices, changes)
}
