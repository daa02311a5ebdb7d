//! From per-fold records to paired differences against `none`, per metric and per class.

use std::collections::{BTreeMap, BTreeSet};

use super::results::{ClassRow, DiagnosticRow, FoldRecord, SummaryRow};
use crate::eval::stats::{Interval, corrected_paired_t};
use crate::rounding::signed;

/// Confidence level of every interval embloom reports.
pub const LEVEL: f64 = 0.95;

/// Fold records grouped by method and probe, in fold order.
pub struct Aggregate<'a> {
    by_pair: BTreeMap<(usize, usize), Vec<&'a FoldRecord>>,
    methods: &'a [String],
    probes: &'a [String],
    classes: &'a [String],
    grown: &'a BTreeSet<u32>,
}

impl<'a> Aggregate<'a> {
    pub fn new(
        records: &'a [FoldRecord],
        methods: &'a [String],
        probes: &'a [String],
        classes: &'a [String],
        grown: &'a BTreeSet<u32>,
    ) -> Self {
        let mut by_pair: BTreeMap<(usize, usize), Vec<&FoldRecord>> = BTreeMap::new();
        for r in records {
            let m = methods.iter().position(|x| *x == r.method).unwrap_or(0);
            let p = probes.iter().position(|x| *x == r.probe).unwrap_or(0);
            by_pair.entry((m, p)).or_default().push(r);
        }
        Aggregate {
            by_pair,
            methods,
            probes,
            classes,
            grown,
        }
    }

    fn records(&self, m: usize, p: usize) -> &[&'a FoldRecord] {
        self.by_pair.get(&(m, p)).map_or(&[], |v| v.as_slice())
    }

    /// Paired comparison of `value` between method `m` and the baseline (method 0) on probe `p`.
    fn compare(&self, m: usize, p: usize, value: impl Fn(&FoldRecord) -> f64) -> (f64, Interval) {
        let base = self.records(0, p);
        let this = self.records(m, p);
        let vals: Vec<f64> = this
            .iter()
            .map(|r| value(r))
            .filter(|v| v.is_finite())
            .collect();
        let mean = if vals.is_empty() {
            f64::NAN
        } else {
            vals.iter().sum::<f64>() / vals.len() as f64
        };
        let diffs: Vec<f64> = this
            .iter()
            .zip(base)
            .map(|(a, b)| value(a) - value(b))
            .filter(|d| d.is_finite())
            .collect();
        let n_train =
            this.iter().map(|r| r.train_real as f64).sum::<f64>() / this.len().max(1) as f64;
        let n_test = this.iter().map(|r| r.test as f64).sum::<f64>() / this.len().max(1) as f64;
        (mean, corrected_paired_t(&diffs, n_train, n_test, LEVEL))
    }

    /// One row per method, probe and metric.
    pub fn summary(&self) -> Vec<SummaryRow> {
        let mut rows = Vec::new();
        for p in 0..self.probes.len() {
            let metric_names: Vec<String> = self
                .records(0, p)
                .first()
                .map(|r| r.metrics.iter().map(|(n, _)| n.clone()).collect())
                .unwrap_or_default();
            for m in 0..self.methods.len() {
                for name in &metric_names {
                    let (mean, iv) = self.compare(m, p, |r| metric(r, name));
                    rows.push(SummaryRow {
                        method: self.methods[m].clone(),
                        probe: self.probes[p].clone(),
                        metric: name.clone(),
                        mean,
                        delta_mean: iv.mean,
                        delta_ci_low: iv.low,
                        delta_ci_high: iv.high,
                        p_value: iv.p_value,
                        folds: self.records(m, p).len(),
                    });
                }
            }
        }
        rows
    }

    /// One row per method, probe and class: the class's recall and its paired difference.
    pub fn per_class(&self) -> Vec<ClassRow> {
        let mut rows = Vec::new();
        for p in 0..self.probes.len() {
            for m in 0..self.methods.len() {
                for (c, name) in self.classes.iter().enumerate() {
                    let (mean, iv) =
                        self.compare(m, p, |r| r.class_recall.get(c).copied().unwrap_or(f64::NAN));
                    rows.push(ClassRow {
                        method: self.methods[m].clone(),
                        probe: self.probes[p].clone(),
                        class: name.clone(),
                        grown: self.grown.contains(&(c as u32)),
                        recall_mean: mean,
                        delta_mean: iv.mean,
                        delta_ci_low: iv.low,
                        delta_ci_high: iv.high,
                        p_value: iv.p_value,
                        folds: iv.n,
                    });
                }
            }
        }
        rows
    }

    /// One plain sentence per method and probe.
    pub fn sentences(&self) -> Vec<String> {
        let mut out = Vec::new();
        for p in 0..self.probes.len() {
            for m in 1..self.methods.len() {
                let (_, ba) = self.compare(m, p, |r| metric(r, "balanced_accuracy"));
                let (_, gr) = self.compare(m, p, |r| metric(r, "grown_class_recall"));
                let mut s = format!(
                    "With the {} probe, {} changed balanced accuracy by {} (95% interval {} to {}, p {}, {} folds)",
                    self.probes[p],
                    self.methods[m],
                    signed(ba.mean),
                    signed(ba.low),
                    signed(ba.high),
                    p_text(ba.p_value),
                    ba.n
                );
                if gr.n > 0 {
                    s += &format!(
                        " and recall on the grown classes by {} ({} to {})",
                        signed(gr.mean),
                        signed(gr.low),
                        signed(gr.high)
                    );
                }
                s += &format!("; {}.", verdict(&ba));
                out.push(s);
            }
        }
        if !out.is_empty() {
            out.push("Synthetic rows are not observations: these estimates come from real held-out rows only, and any probe trained with synthetic rows must be validated on real held-out data before use.".to_string());
        }
        out
    }
}

fn metric(r: &FoldRecord, name: &str) -> f64 {
    r.metrics
        .iter()
        .find(|(n, _)| n == name)
        .map_or(f64::NAN, |(_, v)| *v)
}

fn p_text(p: f64) -> String {
    if !p.is_finite() {
        "n/a".to_string()
    } else if p < 0.001 {
        "< 0.001".to_string()
    } else {
        format!("= {p:.3}")
    }
}

fn verdict(iv: &Interval) -> &'static str {
    if !(iv.low.is_finite() && iv.high.is_finite()) {
        "too few folds to judge"
    } else if iv.low > 0.0 {
        "the interval lies above zero"
    } else if iv.high < 0.0 {
        "the interval lies below zero: this method hurt"
    } else {
        "the interval includes zero: no clear effect"
    }
}

/// Diagnostics averaged over folds, per method and class (NaN folds left out of each mean).
pub fn average_diagnostics(rows: &[DiagnosticRow]) -> Vec<DiagnosticRow> {
    let mut groups: BTreeMap<(String, String), Vec<&DiagnosticRow>> = BTreeMap::new();
    let mut order = Vec::new();
    for r in rows {
        let key = (r.method.clone(), r.class.clone());
        if !groups.contains_key(&key) {
            order.push(key.clone());
        }
        groups.entry(key).or_default().push(r);
    }
    order
        .into_iter()
        .map(|key| {
            let g = &groups[&key];
            let mean = |f: fn(&DiagnosticRow) -> f64| {
                let v: Vec<f64> = g.iter().map(|r| f(r)).filter(|v| v.is_finite()).collect();
                if v.is_empty() {
                    f64::NAN
                } else {
                    v.iter().sum::<f64>() / v.len() as f64
                }
            };
            DiagnosticRow {
                method: key.0.clone(),
                class: key.1.clone(),
                synthetic_rows: mean(|r| r.synthetic_rows),
                intrusion_synthetic: mean(|r| r.intrusion_synthetic),
                intrusion_real: mean(|r| r.intrusion_real),
                distance_ratio: mean(|r| r.distance_ratio),
                precision: mean(|r| r.precision),
                recall: mean(|r| r.recall),
                density: mean(|r| r.density),
                coverage: mean(|r| r.coverage),
            }
        })
        .collect()
}
