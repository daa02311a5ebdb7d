//! The fold loop as separate steps, for running an assessment across machines: each
//! (fold, method) step runs on its own and returns a part (bytes that travel between
//! processes), and the parts of every step combine into exactly the results of
//! [`assess_observed`](super::assess_observed) on the same data and configuration.
//!
//! A step draws from the same seed streams as the whole loop (per method, repeat, fold and
//! class) and its part keeps every float as its bit pattern, so the combination does not
//! depend on where, in what order or how many times the steps ran.

use std::collections::BTreeSet;
use std::time::Instant;

use serde::{Deserialize, Serialize};

use super::config::AssessConfig;
use super::external::RowSets;
use super::method_id::MethodId;
use super::results::{AssessResults, DiagnosticRow, FoldRecord, InputInfo, Scatter, WorkCounters};
use super::run::{FoldWarnings, Gathered, Reuse, WorkItem, finish, gather, method_ids};
use crate::augment::{self, Augmenter};
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::eval::Metric;
use crate::eval::interval::TestOutcome;
use crate::eval::protocol::{SplitKind, make_folds};
use crate::probe::ProbeKind;

/// The steps of an assessment: how many folds (repeats × folds) and its methods, in the
/// order [`WorkItem`] numbers them.
#[derive(Debug, Clone)]
pub struct StepPlan {
    /// Folds in all.
    pub folds: usize,
    /// The methods, `none` first.
    pub methods: Vec<MethodId>,
}

impl StepPlan {
    /// Every step, in the order the whole loop runs them.
    pub fn items(&self) -> Vec<WorkItem> {
        (0..self.folds)
            .flat_map(|fold| (0..self.methods.len()).map(move |method| WorkItem { fold, method }))
            .collect()
    }
}

fn augmenters(cfg: &AssessConfig) -> Result<Vec<Box<dyn Augmenter>>> {
    cfg.methods
        .iter()
        .map(|&m| augment::build(m, &cfg.augment))
        .collect()
}

/// The steps `cfg` makes of `ds` (the folds are made as the loop makes them).
pub fn step_plan(ds: &Dataset, cfg: &AssessConfig, sets: RowSets<'_>) -> Result<StepPlan> {
    let (_, folds) = make_folds(ds, cfg.folds, cfg.repeats, cfg.seed)?;
    let methods = method_ids(&augmenters(cfg)?, sets)?;
    Ok(StepPlan {
        folds: folds.len(),
        methods,
    })
}

/// Run one step of the assessment of `ds` under `cfg`.
pub fn assess_step(
    ds: &Dataset,
    cfg: &AssessConfig,
    input: &InputInfo,
    sets: RowSets<'_>,
    item: WorkItem,
) -> Result<StepPart> {
    let g = gather(
        ds,
        cfg,
        input,
        &augmenters(cfg)?,
        sets,
        &mut |_| {},
        &mut Reuse::default(),
        Some(item),
    )?;
    StepPart::of(item, g)
}

/// The results of the whole assessment from the parts of all its steps, in any order (a step
/// that ran twice, as when a worker was lost and its step retried, gives the same part; one
/// copy is used).
pub fn combine_steps(
    ds: &Dataset,
    cfg: &AssessConfig,
    input: InputInfo,
    sets: RowSets<'_>,
    parts: &[StepPart],
) -> Result<AssessResults> {
    let started = Instant::now();
    let plan = step_plan(ds, cfg, sets)?;
    let mut by_item: Vec<Option<&StepPart>> = vec![None; plan.folds * plan.methods.len()];
    for p in parts {
        let (fold, method) = p.item;
        if fold >= plan.folds || method >= plan.methods.len() || p.folds != plan.folds {
            return Err(Error::param(
                "parts",
                format!(
                    "a part is of step (fold {fold}, method {method}) of {} folds, not of this assessment of {} folds × {} methods",
                    p.folds,
                    plan.folds,
                    plan.methods.len()
                ),
                "combine the parts of one assessment, with the data and settings its steps ran on",
            ));
        }
        by_item[fold * plan.methods.len() + method] = Some(p);
    }
    if let Some(missing) = by_item.iter().position(Option::is_none) {
        return Err(Error::param(
            "parts",
            format!(
                "step (fold {}, method {}) has no part ({} of {} steps given)",
                missing / plan.methods.len(),
                missing % plan.methods.len(),
                by_item.iter().filter(|p| p.is_some()).count(),
                by_item.len()
            ),
            "run every step the plan lists before combining",
        ));
    }
    let split = parts.first().map_or(SplitKind::Stratified, |p| p.split);
    let mut g = Gathered {
        split,
        folds: plan.folds,
        methods: plan.methods,
        records: Vec::new(),
        diagnostics: Vec::new(),
        scatters: Vec::new(),
        warnings: BTreeSet::new(),
        fold_warnings: FoldWarnings::default(),
        grown_anywhere: BTreeSet::new(),
        work: WorkCounters::default(),
    };
    for p in by_item.into_iter().flatten() {
        p.add_to(&mut g)?;
    }
    let mut results = finish(ds, cfg, input, sets, g, started);
    results.elapsed_seconds = started.elapsed().as_secs_f64();
    Ok(results)
}

/// What one step found, as it travels between processes: records, diagnostics, scatters,
/// warnings and counters, floats as bit patterns so nothing is rounded on the way.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct StepPart {
    item: (usize, usize),
    folds: usize,
    split: SplitKind,
    records: Vec<WireRecord>,
    diagnostics: Vec<WireDiagnostic>,
    scatters: Vec<WireScatter>,
    warnings: Vec<String>,
    fold_warnings: Vec<(String, Vec<String>)>,
    grown: Vec<u32>,
    work: [usize; 5],
}

#[derive(Debug, Clone, Serialize, Deserialize)]
struct WireRecord {
    repeat: usize,
    fold: usize,
    probe: ProbeKind,
    train_real: usize,
    train_synthetic: usize,
    test: usize,
    metrics: Vec<(String, u64)>,
    class_recall: Vec<u64>,
    converged: Option<bool>,
    rows: Vec<usize>,
    labels: Vec<u32>,
    pred: Vec<u32>,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
struct WireDiagnostic {
    class: String,
    distance_measure: String,
    /// synthetic_rows, intrusion_synthetic, intrusion_real, distance_ratio, prdc_k,
    /// precision, recall, density, coverage.
    values: [u64; 9],
}

#[derive(Debug, Clone, Serialize, Deserialize)]
struct WireScatter {
    class: String,
    real: Vec<[u32; 2]>,
    synthetic: Vec<[u32; 2]>,
    others: Vec<[u32; 2]>,
    rivals: Vec<String>,
    others_rival: Vec<usize>,
}

fn points(p: &[[f32; 2]]) -> Vec<[u32; 2]> {
    p.iter().map(|[a, b]| [a.to_bits(), b.to_bits()]).collect()
}

fn unpoints(p: &[[u32; 2]]) -> Vec<[f32; 2]> {
    p.iter()
        .map(|[a, b]| [f32::from_bits(*a), f32::from_bits(*b)])
        .collect()
}

impl StepPart {
    /// The step this part is of, as (fold, method).
    pub fn item(&self) -> WorkItem {
        WorkItem {
            fold: self.item.0,
            method: self.item.1,
        }
    }

    /// The part as bytes (JSON), to send to the process that combines.
    pub fn to_bytes(&self) -> Result<Vec<u8>> {
        serde_json::to_vec(self).map_err(|e| {
            Error::data(
                format!("cannot serialise a step's part: {e}"),
                "report this as a bug",
            )
        })
    }

    /// A part from [`StepPart::to_bytes`]'s bytes.
    pub fn from_bytes(bytes: &[u8]) -> Result<StepPart> {
        serde_json::from_slice(bytes).map_err(|e| {
            Error::data(
                format!("a step's part is not readable: {e}"),
                "pass the bytes a step returned, unchanged, from the same embloom version",
            )
        })
    }

    fn of(item: WorkItem, g: Gathered) -> Result<StepPart> {
        let method = |id: &MethodId| -> Result<()> {
            if g.methods.get(item.method) == Some(id) {
                Ok(())
            } else {
                Err(Error::data(
                    format!("step {item:?} made rows of {id}"),
                    "report this as a bug",
                ))
            }
        };
        let mut records = Vec::with_capacity(g.records.len());
        for r in &g.records {
            method(&r.method)?;
            records.push(WireRecord {
                repeat: r.repeat,
                fold: r.fold,
                probe: r.probe,
                train_real: r.train_real,
                train_synthetic: r.train_synthetic,
                test: r.test,
                metrics: r
                    .metrics
                    .iter()
                    .map(|(m, v)| (m.key().to_string(), v.to_bits()))
                    .collect(),
                class_recall: r.class_recall.iter().map(|v| v.to_bits()).collect(),
                converged: r.converged,
                rows: r.outcome.rows.clone(),
                labels: r.outcome.labels.clone(),
                pred: r.outcome.pred.clone(),
            });
        }
        let mut diagnostics = Vec::with_capacity(g.diagnostics.len());
        for d in &g.diagnostics {
            method(&d.method)?;
            diagnostics.push(WireDiagnostic {
                class: d.class.clone(),
                distance_measure: d.distance_measure.clone(),
                values: [
                    d.synthetic_rows,
                    d.intrusion_synthetic,
                    d.intrusion_real,
                    d.distance_ratio,
                    d.prdc_k,
                    d.precision,
                    d.recall,
                    d.density,
                    d.coverage,
                ]
                .map(f64::to_bits),
            });
        }
        let mut scatters = Vec::with_capacity(g.scatters.len());
        for s in &g.scatters {
            method(&s.method)?;
            scatters.push(WireScatter {
                class: s.class.clone(),
                real: points(&s.real),
                synthetic: points(&s.synthetic),
                others: points(&s.others),
                rivals: s.rivals.clone(),
                others_rival: s.others_rival.clone(),
            });
        }
        let w = &g.work;
        Ok(StepPart {
            item: (item.fold, item.method),
            folds: g.folds,
            split: g.split,
            records,
            diagnostics,
            scatters,
            warnings: g.warnings.into_iter().collect(),
            fold_warnings: g
                .fold_warnings
                .entries()
                .map(|(k, v)| (k.clone(), v.clone()))
                .collect(),
            grown: g.grown_anywhere.into_iter().collect(),
            work: [
                w.test_real_knn_passes,
                w.test_synthetic_knn_passes,
                w.linear_warm_starts,
                w.linear_fits,
                w.linear_iterations_total,
            ],
        })
    }

    /// Append this step's part to what the steps before it gathered.
    fn add_to(&self, g: &mut Gathered) -> Result<()> {
        let method = g.methods[self.item.1].clone();
        for r in &self.records {
            let metrics = r
                .metrics
                .iter()
                .map(|(k, v)| Ok((k.parse::<Metric>()?, f64::from_bits(*v))))
                .collect::<Result<Vec<_>>>()?;
            g.records.push(FoldRecord {
                repeat: r.repeat,
                fold: r.fold,
                method: method.clone(),
                probe: r.probe,
                train_real: r.train_real,
                train_synthetic: r.train_synthetic,
                test: r.test,
                metrics,
                class_recall: r.class_recall.iter().map(|&v| f64::from_bits(v)).collect(),
                converged: r.converged,
                outcome: TestOutcome {
                    rows: r.rows.clone(),
                    labels: r.labels.clone(),
                    pred: r.pred.clone(),
                },
            });
        }
        for d in &self.diagnostics {
            let [
                synthetic_rows,
                intrusion_synthetic,
                intrusion_real,
                distance_ratio,
                prdc_k,
                precision,
                recall,
                density,
                coverage,
            ] = d.values.map(f64::from_bits);
            g.diagnostics.push(DiagnosticRow {
                method: method.clone(),
                class: d.class.clone(),
                synthetic_rows,
                intrusion_synthetic,
                intrusion_real,
                distance_ratio,
                distance_measure: d.distance_measure.clone(),
                prdc_k,
                precision,
                recall,
                density,
                coverage,
            });
        }
        for s in &self.scatters {
            g.scatters.push(Scatter {
                method: method.clone(),
                class: s.class.clone(),
                real: unpoints(&s.real),
                synthetic: unpoints(&s.synthetic),
                others: unpoints(&s.others),
                rivals: s.rivals.clone(),
                others_rival: s.others_rival.clone(),
            });
        }
        g.warnings.extend(self.warnings.iter().cloned());
        for (w, folds) in &self.fold_warnings {
            g.fold_warnings.add_named(w.clone(), folds);
        }
        g.grown_anywhere.extend(self.grown.iter().copied());
        let [a, b, c, d, e] = self.work;
        g.work.test_real_knn_passes += a;
        g.work.test_synthetic_knn_passes += b;
        g.work.linear_warm_starts += c;
        g.work.linear_fits += d;
        g.work.linear_iterations_total += e;
        Ok(())
    }
}
