//! From per-fold records to paired differences against `none`, per metric and per class.
//!
//! Accuracy, balanced accuracy, macro-F1, grown-class recall and the per-class figures are
//! computed from the test rows pooled over each repeat's folds under the row-level intervals
//! (under `corrected-t`, a fold-level method, they are fold averages) (for F1 the pooled confusion
//! counts, as Forman & Scholz 2010 recommend: fold-averaged F1 is biased on small folds), and
//! their intervals come from the chosen [`IntervalKind`]. Log loss and ECE stay fold averages
//! with the corrected t over folds (they need the per-row probabilities, which are not kept).

use std::collections::{BTreeMap, BTreeSet, HashMap};

use rand::RngCore;

use super::method_id::MethodId;
use super::probe_side::not_applicable;
use super::results::{AssessResults, ClassRow, DiagnosticRow, FoldRecord, SummaryRow};
use crate::eval::Metric;
use crate::eval::interval::{
    self, IntervalKind, NoInterval, PairedEstimate, PairedFold, PooledMetric,
};
use crate::eval::interval::{ClassCounts, counts_pooled};
use crate::eval::stats::corrected_paired_t;
use crate::probe::ProbeKind;
use crate::rounding::signed;
use crate::seed;

/// Confidence level of every interval embloom reports.
pub const LEVEL: f64 = 0.95;

/// How many figures a mostly-zero warning names before it says how many more.
const SHOWN_FIGURES: usize = 4;

/// A warning is given when more than this share of a figure's fold differences is exactly 0.
const MOSTLY_ZERO: f64 = 0.5;

/// Estimates of one method × probe against the baseline.
struct Compared {
    /// Per pooled metric: the method's pooled score and the paired estimate.
    values: Vec<f64>,
    estimates: Vec<PairedEstimate>,
}

/// Fold records grouped by method and probe, in fold order.
pub struct Aggregate<'a> {
    by_pair: BTreeMap<(usize, usize), Vec<&'a FoldRecord>>,
    compared: BTreeMap<(usize, usize), Compared>,
    methods: &'a [MethodId],
    probes: &'a [ProbeKind],
    classes: &'a [String],
    grown: &'a BTreeSet<u32>,
}

impl<'a> Aggregate<'a> {
    pub fn new(
        records: &'a [FoldRecord],
        methods: &'a [MethodId],
        probes: &'a [ProbeKind],
        classes: &'a [String],
        grown: &'a BTreeSet<u32>,
        kind: IntervalKind,
        seed: u64,
    ) -> Self {
        let mut by_pair: BTreeMap<(usize, usize), Vec<&FoldRecord>> = BTreeMap::new();
        for r in records {
            let m = methods.iter().position(|x| *x == r.method).unwrap_or(0);
            let p = probes.iter().position(|x| *x == r.probe).unwrap_or(0);
            by_pair.entry((m, p)).or_default().push(r);
        }
        let metrics = pooled_metrics(classes.len(), grown);
        let mut compared = BTreeMap::new();
        for (&(m, p), this) in &by_pair {
            let base = by_pair.get(&(0, p)).map_or(&[][..], |v| v.as_slice());
            let folds: Vec<PairedFold> = this
                .iter()
                .zip(base)
                .map(|(a, b)| PairedFold {
                    repeat: a.repeat,
                    train_rows: a.train_real,
                    method: &a.outcome,
                    baseline: &b.outcome,
                })
                .collect();
            let stream_seed = seed::stream(
                seed,
                &[
                    seed::tag("interval"),
                    seed::tag(&methods[m].name()),
                    seed::tag(probes[p].name()),
                ],
            )
            .next_u64();
            let estimates =
                interval::paired(kind, &folds, &metrics, classes.len(), LEVEL, stream_seed);
            // The corrected t is a fold-level method: its level column is the fold average,
            // so that level − baseline level equals the printed difference.
            // Each fold's counts are made once, not once per metric: there are 3 metrics per
            // class, so recounting made this classes × (classes + rows).
            let values = if kind == IntervalKind::CorrectedT {
                let counts: Vec<ClassCounts> = folds
                    .iter()
                    .map(|f| ClassCounts::of(f.method, classes.len()))
                    .collect();
                metrics
                    .iter()
                    .map(|metric| {
                        let v: Vec<f64> = counts
                            .iter()
                            .map(|c| metric.value(c))
                            .filter(|v| v.is_finite())
                            .collect();
                        mean(&v)
                    })
                    .collect()
            } else {
                counts_pooled(&folds, &metrics, classes.len())
                    .into_iter()
                    .map(|v| v.method)
                    .collect()
            };
            compared.insert((m, p), Compared { values, estimates });
        }
        Aggregate {
            by_pair,
            compared,
            methods,
            probes,
            classes,
            grown,
        }
    }

    fn records(&self, m: usize, p: usize) -> &[&'a FoldRecord] {
        self.by_pair.get(&(m, p)).map_or(&[], |v| v.as_slice())
    }

    /// The pooled score and paired estimate of pooled metric `j`.
    fn pooled(&self, m: usize, p: usize, j: usize) -> Option<(f64, &PairedEstimate)> {
        self.compared
            .get(&(m, p))
            .map(|c| (c.values[j], &c.estimates[j]))
    }

    /// Fold-averaged value and corrected-t estimate of a metric kept only per fold.
    fn fold_level(&self, m: usize, p: usize, name: Metric) -> (f64, PairedEstimate) {
        let base = self.records(0, p);
        let this = self.records(m, p);
        let vals: Vec<f64> = this
            .iter()
            .map(|r| metric(r, name))
            .filter(|v| v.is_finite())
            .collect();
        let mean = mean(&vals);
        let diffs: Vec<f64> = this
            .iter()
            .zip(base)
            .map(|(a, b)| metric(a, name) - metric(b, name))
            .filter(|d| d.is_finite())
            .collect();
        let n = diffs.len();
        let zero = diffs.iter().filter(|&&d| d == 0.0).count();
        let n_train =
            this.iter().map(|r| r.train_real as f64).sum::<f64>() / this.len().max(1) as f64;
        let n_test = this.iter().map(|r| r.test as f64).sum::<f64>() / this.len().max(1) as f64;
        let iv = corrected_paired_t(&diffs, n_train, n_test, LEVEL);
        let no_interval = if n < 2 {
            Some(NoInterval::TooFewFolds { folds: n })
        } else if !(iv.low.is_finite() && iv.high.is_finite()) {
            Some(NoInterval::NoVariation { folds: n })
        } else {
            None
        };
        let est = PairedEstimate {
            delta: iv.mean,
            low: if no_interval.is_some() {
                f64::NAN
            } else {
                iv.low
            },
            high: if no_interval.is_some() {
                f64::NAN
            } else {
                iv.high
            },
            p_value: if no_interval.is_some() {
                f64::NAN
            } else {
                iv.p_value
            },
            folds: n,
            no_interval,
            zero_folds: zero,
        };
        (mean, est)
    }

    /// The method's value and paired estimate of the summary metric `name`.
    fn estimate(&self, m: usize, p: usize, name: Metric) -> (f64, PairedEstimate) {
        match name.pooled_index() {
            Some(j) => self
                .pooled(m, p, j)
                .map(|(v, e)| (v, e.clone()))
                .unwrap_or_else(|| self.fold_level(m, p, name)),
            None => self.fold_level(m, p, name),
        }
    }

    /// One row per method, probe and metric.
    pub fn summary(&self) -> Vec<SummaryRow> {
        let mut rows = Vec::new();
        for p in 0..self.probes.len() {
            let metric_names: Vec<Metric> = self
                .records(0, p)
                .first()
                .map(|r| r.metrics.iter().map(|(n, _)| *n).collect())
                .unwrap_or_default();
            for m in 0..self.methods.len() {
                if not_applicable(&self.methods[m], self.probes[p]).is_some() {
                    rows.extend(metric_names.iter().map(|&name| SummaryRow {
                        method: self.methods[m].clone(),
                        probe: self.probes[p],
                        metric: name,
                        mean: f64::NAN,
                        delta_mean: f64::NAN,
                        delta_ci_low: f64::NAN,
                        delta_ci_high: f64::NAN,
                        p_value: f64::NAN,
                        folds: 0,
                        no_interval: Some(format!(
                            "not applicable: {} does not apply to the {} probe",
                            self.methods[m], self.probes[p]
                        )),
                        applies: false,
                    }));
                    continue;
                }
                for &name in &metric_names {
                    let (mean, iv) = self.estimate(m, p, name);
                    rows.push(SummaryRow {
                        method: self.methods[m].clone(),
                        probe: self.probes[p],
                        metric: name,
                        mean,
                        delta_mean: iv.delta,
                        delta_ci_low: iv.low,
                        delta_ci_high: iv.high,
                        p_value: iv.p_value,
                        folds: iv.folds,
                        no_interval: iv.no_interval.as_ref().map(|r| r.to_string()),
                        applies: true,
                    });
                }
            }
        }
        rows
    }

    /// One row per method, probe and class: the class's recall and its paired difference.
    pub fn per_class(&self) -> Vec<ClassRow> {
        let c_n = self.classes.len();
        let mut rows = Vec::new();
        for p in 0..self.probes.len() {
            for m in 0..self.methods.len() {
                if not_applicable(&self.methods[m], self.probes[p]).is_some() {
                    continue;
                }
                for (c, name) in self.classes.iter().enumerate() {
                    let (recall, iv) = self
                        .pooled(m, p, Metric::POOLED.len() + c)
                        .map(|(v, e)| (v, e.clone()))
                        .unwrap_or_else(|| (f64::NAN, missing()));
                    let figure = |j: usize| {
                        self.pooled(m, p, j)
                            .map(|(v, e)| (v, e.clone()))
                            .unwrap_or_else(|| (f64::NAN, missing()))
                    };
                    let (precision, pr) = figure(Metric::POOLED.len() + c_n + c);
                    let (f1, f) = figure(Metric::POOLED.len() + 2 * c_n + c);
                    rows.push(ClassRow {
                        method: self.methods[m].clone(),
                        probe: self.probes[p],
                        class: name.clone(),
                        grown: self.grown.contains(&(c as u32)),
                        recall_mean: recall,
                        precision_pooled: precision,
                        f1_pooled: f1,
                        precision_delta_mean: pr.delta,
                        precision_delta_ci_low: pr.low,
                        precision_delta_ci_high: pr.high,
                        precision_p_value: pr.p_value,
                        f1_delta_mean: f.delta,
                        f1_delta_ci_low: f.low,
                        f1_delta_ci_high: f.high,
                        f1_p_value: f.p_value,
                        delta_mean: iv.delta,
                        delta_ci_low: iv.low,
                        delta_ci_high: iv.high,
                        p_value: iv.p_value,
                        folds: iv.folds,
                        no_interval: iv.no_interval.as_ref().map(|r| r.to_string()),
                    });
                }
            }
        }
        rows
    }

    /// Warnings about figures whose fold differences are mostly exactly zero: their interval
    /// (if any) rests on a handful of test rows.
    pub fn warnings(&self) -> Vec<String> {
        let mut out = Vec::new();
        for (&(m, p), c) in &self.compared {
            if m == 0 {
                continue;
            }
            let labels = Metric::POOLED
                .iter()
                .map(|m| m.words())
                .chain(self.classes.iter().map(|n| format!("recall of class {n}")));
            // Per class only for the grown classes: a class every probe always gets right has
            // all-zero differences too, and that is no news.
            let pooled = Metric::POOLED.len();
            let relevant = (0..pooled + self.classes.len())
                .map(|j| j < pooled || self.grown.contains(&((j - pooled) as u32)));
            // One line per method and probe, however many figures it concerns, so the
            // warning stays readable on sets with many grown classes.
            let mostly_zero: Vec<String> = labels
                .zip(&c.estimates)
                .zip(relevant)
                .filter(|((_, e), keep)| {
                    *keep && e.folds > 0 && e.zero_folds as f64 > MOSTLY_ZERO * e.folds as f64
                })
                .map(|((label, e), _)| format!("{label} ({} of {})", e.zero_folds, e.folds))
                .collect();
            if mostly_zero.is_empty() {
                continue;
            }
            let shown = mostly_zero.len().min(SHOWN_FIGURES);
            let more = match mostly_zero.len() - shown {
                0 => String::new(),
                n => format!(" and {n} more"),
            };
            out.push(format!(
                "{} with the {} probe: most fold differences are exactly zero in {}{more}; those estimates rest on very few test rows",
                self.methods[m],
                self.probes[p],
                mostly_zero[..shown].join(", ")
            ));
        }
        out
    }

    /// One plain sentence per method and probe.
    pub fn sentences(&self) -> Vec<String> {
        let mut out = Vec::new();
        for p in 0..self.probes.len() {
            for m in 1..self.methods.len() {
                if not_applicable(&self.methods[m], self.probes[p]).is_some() {
                    continue;
                }
                let (_, ba) = self.estimate(m, p, Metric::BalancedAccuracy);
                let (_, gr) = self.estimate(m, p, Metric::GrownClassRecall);
                let mut s = format!(
                    "With the {} probe, {} changed balanced accuracy by {} ({}, {} folds)",
                    self.probes[p],
                    self.methods[m],
                    signed(ba.delta),
                    interval_text(&ba),
                    ba.folds
                );
                if gr.folds > 0 {
                    s += &format!(
                        " and recall on the grown classes by {} ({})",
                        signed(gr.delta),
                        interval_text(&gr)
                    );
                }
                s += &format!("; {}.", verdict(&ba));
                out.push(s);
            }
        }
        if !out.is_empty() {
            // The one caution, shared with the table and the page, which print it once.
            out.push(crate::report::CAUTION.to_string());
        }
        out
    }
}

/// The pooled metrics computed for every method × probe: the four summary scores, then recall,
/// precision and F1 of each class.
fn pooled_metrics(n_classes: usize, grown: &BTreeSet<u32>) -> Vec<PooledMetric> {
    let c = 0..n_classes as u32;
    Metric::POOLED
        .into_iter()
        .filter_map(|m| match m {
            Metric::Accuracy => Some(PooledMetric::Accuracy),
            Metric::BalancedAccuracy => Some(PooledMetric::BalancedAccuracy),
            Metric::MacroF1 => Some(PooledMetric::MacroF1),
            Metric::GrownClassRecall => Some(PooledMetric::Recall(grown.iter().copied().collect())),
            Metric::LogLoss | Metric::Ece => None,
        })
        .chain(c.clone().map(|c| PooledMetric::Recall(vec![c])))
        .chain(c.clone().map(PooledMetric::Precision))
        .chain(c.map(PooledMetric::F1))
        .collect()
}

fn missing() -> PairedEstimate {
    PairedEstimate {
        delta: f64::NAN,
        low: f64::NAN,
        high: f64::NAN,
        p_value: f64::NAN,
        folds: 0,
        no_interval: Some(NoInterval::TooFewFolds { folds: 0 }),
        zero_folds: 0,
    }
}

fn mean(v: &[f64]) -> f64 {
    if v.is_empty() {
        f64::NAN
    } else {
        v.iter().sum::<f64>() / v.len() as f64
    }
}

fn interval_text(e: &PairedEstimate) -> String {
    match &e.no_interval {
        Some(why) => why.to_string(),
        None => format!(
            "95% interval {} to {}, p {}",
            signed(e.low),
            signed(e.high),
            p_text(e.p_value)
        ),
    }
}

fn metric(r: &FoldRecord, name: Metric) -> f64 {
    r.metrics
        .iter()
        .find(|(n, _)| *n == name)
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

fn verdict(iv: &PairedEstimate) -> &'static str {
    if iv.no_interval.is_some() {
        "no interval, so no judgement"
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
    let mut groups: HashMap<(MethodId, String), Vec<&DiagnosticRow>> = HashMap::new();
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
                distance_measure: g[0].distance_measure.clone(),
                prdc_k: g.iter().map(|r| r.prdc_k).fold(f64::INFINITY, f64::min),
                precision: mean(|r| r.precision),
                recall: mean(|r| r.recall),
                density: mean(|r| r.density),
                coverage: mean(|r| r.coverage),
            }
        })
        .collect()
}

/// The summary rows of a finished assessment with intervals of another kind: the same fold
/// records, re-summarised (what a comparison of interval methods needs, without refitting).
pub fn summary_with(results: &AssessResults, kind: IntervalKind) -> Vec<SummaryRow> {
    let classes = &results.input.classes;
    // Reversed, so that a repeated name keeps its first index, as a linear search would.
    let index: BTreeMap<&str, u32> = classes
        .iter()
        .enumerate()
        .rev()
        .map(|(i, c)| (c.as_str(), i as u32))
        .collect();
    let grown: BTreeSet<u32> = results
        .grown_classes
        .iter()
        .filter_map(|g| index.get(g.as_str()).copied())
        .collect();
    Aggregate::new(
        &results.folds,
        &results.methods,
        &results.probes,
        classes,
        &grown,
        kind,
        results.seed,
    )
    .summary()
}
