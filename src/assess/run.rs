//! The fold loop. Every augmenter is fitted on the fold's real training rows only; probes
//! are trained on real + synthetic training rows and scored on the real test rows only; all
//! methods see the same folds, so differences against `none` are paired.

use std::borrow::Cow;
use std::collections::BTreeSet;
use std::time::Instant;

use ndarray::Array2;

use super::config::{AssessConfig, ExternalBudget, ResultsConfig};
use super::external::{self, RowSets};
use super::from_file::FileRows;
use super::method_id::MethodId;
use super::probe_side::{ProbeSide, not_applicable};
use super::results::{AssessResults, DiagnosticRow, FoldRecord, InputInfo, Scatter, WorkCounters};
use super::{confusion, scatter, shared_knn, summary};
use crate::augment::{self, Augmenter, Grown, MethodKind, Plan, class_indices, describe_notes};
use crate::data::{self, Dataset, RowIndex, Rows, Subset};
use crate::error::{Error, Result};
use crate::eval::Metric;
use crate::eval::diagnostics::{TrainingRows, class_diagnostics, ratio_distance_name};
use crate::eval::interval::TestOutcome;
use crate::eval::metrics::{ece, grown_class_recall, log_loss, score};
use crate::eval::protocol::{Fold, SplitKind, make_folds};
use crate::neighbors::{self, Knn};
use crate::probe::ProbeKind;
use crate::probe::{CentroidProbe, KnnProbe};
use crate::probe::{ClassWeight, LinearModel, LinearParams, LinearProbe, LogitAdjustment};
use crate::seed;

/// Bins of the expected calibration error (Guo et al. 2017 use 15).
const ECE_BINS: usize = 15;

/// Where the fold loop is, reported before each (fold, method) step so a caller can draw a
/// bar; the library itself never draws one.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Progress {
    /// Steps finished so far.
    pub done: usize,
    /// Steps in all: folds × methods.
    pub total: usize,
    /// The fold about to run, counted from 1.
    pub fold: usize,
    /// Folds in all (repeats × folds).
    pub folds: usize,
    /// The method about to run on that fold.
    pub method: MethodId,
}

/// Assess the methods of `cfg` on `ds`.
pub fn assess(ds: &Dataset, cfg: &AssessConfig, input: InputInfo) -> Result<AssessResults> {
    assess_observed(ds, cfg, input, &mut |_| {})
}

/// [`assess`], calling `on_progress` before each (fold, method) step.
pub fn assess_observed(
    ds: &Dataset,
    cfg: &AssessConfig,
    input: InputInfo,
    on_progress: &mut dyn FnMut(Progress),
) -> Result<AssessResults> {
    let augmenters = cfg
        .methods
        .iter()
        .map(|&m| augment::build(m, &cfg.augment))
        .collect::<Result<Vec<_>>>()?;
    assess_with_observed(ds, cfg, input, &augmenters, on_progress)
}

/// [`assess_observed`] with a grown file's synthetic rows as further methods, after those of
/// `cfg` (see [`FileRows`]: in each fold only rows whose parent and partner are training rows).
pub fn assess_grown_observed(
    ds: &Dataset,
    cfg: &AssessConfig,
    input: InputInfo,
    from_file: &[FileRows],
    on_progress: &mut dyn FnMut(Progress),
) -> Result<AssessResults> {
    assess_sets_observed(ds, cfg, input, RowSets::files(from_file), on_progress)
}

/// [`assess_observed`] with rows made before the split as further methods, after those of
/// `cfg`: a grown file's rows and external sets (in each fold only rows whose parent, and
/// partner when there is one, are training rows; external sets drawn under their budget),
/// then the unions of `sets.config`.
pub fn assess_sets_observed(
    ds: &Dataset,
    cfg: &AssessConfig,
    input: InputInfo,
    sets: RowSets<'_>,
    on_progress: &mut dyn FnMut(Progress),
) -> Result<AssessResults> {
    let augmenters = cfg
        .methods
        .iter()
        .map(|&m| augment::build(m, &cfg.augment))
        .collect::<Result<Vec<_>>>()?;
    assess_reusing(
        ds,
        cfg,
        input,
        &augmenters,
        sets,
        on_progress,
        &mut Reuse::default(),
    )
}

/// Assess with augmenters supplied by the caller (the first must be the `none` baseline);
/// tests use it to plant a deliberately leaky augmenter.
pub fn assess_with(
    ds: &Dataset,
    cfg: &AssessConfig,
    input: InputInfo,
    augmenters: &[Box<dyn Augmenter>],
) -> Result<AssessResults> {
    assess_with_observed(ds, cfg, input, augmenters, &mut |_| {})
}

/// [`assess_with`], calling `on_progress` before each (fold, method) step.
pub fn assess_with_observed(
    ds: &Dataset,
    cfg: &AssessConfig,
    input: InputInfo,
    augmenters: &[Box<dyn Augmenter>],
    on_progress: &mut dyn FnMut(Progress),
) -> Result<AssessResults> {
    assess_reusing(
        ds,
        cfg,
        input,
        augmenters,
        RowSets::files(&[]),
        on_progress,
        &mut Reuse::default(),
    )
}

/// Where a method's synthetic rows of a fold come from.
enum Arm<'a> {
    /// Fitted on the fold's training rows.
    Fit(&'a dyn Augmenter),
    /// Rows made before the split (a grown file's, an external set's), gated by their
    /// provenance.
    File(&'a FileRows),
    /// The union of its parts' rows, each made as it would be alone.
    Union(MethodId, Vec<Arm<'a>>),
}

impl<'a> Arm<'a> {
    fn id(&self) -> MethodId {
        match self {
            Arm::Fit(a) => MethodId::Kind(a.kind()),
            Arm::File(f) => f.id(),
            Arm::Union(id, _) => id.clone(),
        }
    }

    /// The arm of one part of a union, among the single arms.
    fn part(id: &MethodId, singles: &[Arm<'a>], union: &MethodId) -> Result<Arm<'a>> {
        let found = singles.iter().find(|a| a.id() == *id);
        match found {
            Some(Arm::Fit(a)) if !id.is_baseline() => Ok(Arm::Fit(*a)),
            Some(Arm::File(f)) => Ok(Arm::File(f)),
            _ => Err(Error::param(
                "methods",
                format!(
                    "{union} joins '{id}', which is no method, external set or grown file's rows of this assessment"
                ),
                "join with + only methods that make rows (not none), external sets or a grown file's rows, each also given alone",
            )),
        }
    }
}

/// What one assessment leaves for the next on the same data, folds, seed, probes and
/// `none` (a sweep, which changes only the knob of the other method): the folds, and per fold
/// the test-to-real neighbours and what `none` predicted. Filled by the first assessment and
/// read by the rest, so `none` runs once per (repeat, fold, probe).
#[derive(Default)]
pub(super) struct Reuse {
    folds: Option<(SplitKind, Vec<Fold>)>,
    baselines: Vec<FoldBaseline>,
    /// What the shared work depends on, as the first assessment ran it.
    made_for: Option<ReuseKey>,
}

/// The settings the folds and the `none` predictions depend on.
#[derive(Debug, Clone, PartialEq)]
struct ReuseKey {
    folds: usize,
    repeats: usize,
    seed: u64,
    probes: Vec<ProbeKind>,
    knn: crate::probe::KnnParams,
    linear: crate::probe::LinearParams,
}

impl ReuseKey {
    fn of(cfg: &AssessConfig) -> Self {
        ReuseKey {
            folds: cfg.folds,
            repeats: cfg.repeats,
            seed: cfg.seed,
            probes: cfg.probes.clone(),
            knn: cfg.knn,
            linear: cfg.linear,
        }
    }
}

/// The `none` baseline on one fold.
struct FoldBaseline {
    real_knn: Option<Knn>,
    /// One per probe, in the configuration's order.
    probes: Vec<Evaluated>,
}

/// One probe's result on one fold's test rows.
#[derive(Clone)]
struct Evaluated {
    pred: Vec<u32>,
    /// Log loss and ECE, for a probe that gives probabilities.
    calibration: Option<(f64, f64)>,
    converged: Option<bool>,
    /// The linear probe's model: where the other methods' fits start from.
    model: Option<LinearModel>,
}

/// [`assess_with_observed`], reusing (or filling) what an earlier assessment left.
pub(super) fn assess_reusing(
    ds: &Dataset,
    cfg: &AssessConfig,
    input: InputInfo,
    augmenters: &[Box<dyn Augmenter>],
    sets: RowSets<'_>,
    on_progress: &mut dyn FnMut(Progress),
    reuse: &mut Reuse,
) -> Result<AssessResults> {
    let started = Instant::now();
    let gathered = gather(ds, cfg, &input, augmenters, sets, on_progress, reuse, None)?;
    Ok(finish(ds, cfg, input, sets, gathered, started))
}

/// One step of the fold loop: a method (by its position among the assessment's methods,
/// `none` first) on one fold (by its position among repeats × folds). Every step can run on
/// its own, anywhere, and the steps' parts combine into the results of the whole loop.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub struct WorkItem {
    /// The fold, counted from 0 over repeats × folds.
    pub fold: usize,
    /// The method, counted from 0 (`none`).
    pub method: usize,
}

/// What the fold loop gathers before it is summarised: everything the results hold that is
/// made fold by fold, in (fold, method) order.
pub(super) struct Gathered {
    pub(super) split: SplitKind,
    /// Folds in all (repeats × folds), whatever part of them this holds.
    pub(super) folds: usize,
    pub(super) methods: Vec<MethodId>,
    pub(super) records: Vec<FoldRecord>,
    /// Per fold and grown class, averaged over folds when the results are made.
    pub(super) diagnostics: Vec<DiagnosticRow>,
    pub(super) scatters: Vec<Scatter>,
    pub(super) warnings: BTreeSet<String>,
    pub(super) fold_warnings: FoldWarnings,
    pub(super) grown_anywhere: BTreeSet<u32>,
    pub(super) work: WorkCounters,
}

/// The results from what the fold loop gathered: the summary, per-class rows, averaged
/// diagnostics and the warnings, each once.
pub(super) fn finish(
    ds: &Dataset,
    cfg: &AssessConfig,
    input: InputInfo,
    sets: RowSets<'_>,
    g: Gathered,
    started: Instant,
) -> AssessResults {
    let Gathered {
        split,
        folds,
        methods,
        records,
        diagnostics,
        scatters,
        mut warnings,
        fold_warnings,
        grown_anywhere,
        work,
    } = g;
    warnings.extend(fold_warnings.finish(folds));
    let probes = cfg.probes.clone();
    let (summary_rows, per_class, sentences) = {
        let agg = summary::Aggregate::new(
            &records,
            &methods,
            &probes,
            &ds.classes,
            &grown_anywhere,
            cfg.interval,
            cfg.seed,
        );
        warnings.extend(agg.warnings());
        (agg.summary(), agg.per_class(), agg.sentences())
    };
    let (confusion, confusion_changes) =
        confusion::confusions(&records, &methods, &probes, &ds.classes);
    AssessResults {
        embloom_version: env!("CARGO_PKG_VERSION").to_string(),
        command_line: String::new(),
        input,
        config: ResultsConfig {
            external: sets.record(),
            ..cfg.record()
        },
        seed: cfg.seed,
        split,
        methods,
        probes,
        grown_classes: grown_anywhere
            .iter()
            .map(|&c| ds.classes[c as usize].clone())
            .collect(),
        summary: summary_rows,
        per_class,
        confusion,
        confusion_changes,
        sentences,
        diagnostics: summary::average_diagnostics(&diagnostics),
        scatter: scatters,
        folds: records,
        warnings: warnings.into_iter().collect(),
        work,
        elapsed_seconds: started.elapsed().as_secs_f64(),
    }
}

/// The fold loop, over every (fold, method) or, with `only`, that one step. A step of a
/// method other than `none` still fits `none` on its fold when the linear probe runs (the
/// method's fit starts from that solution), but keeps nothing of it, so the parts of all
/// steps add up to the whole loop's.
#[allow(clippy::too_many_arguments)]
pub(super) fn gather(
    ds: &Dataset,
    cfg: &AssessConfig,
    input: &InputInfo,
    augmenters: &[Box<dyn Augmenter>],
    sets: RowSets<'_>,
    on_progress: &mut dyn FnMut(Progress),
    reuse: &mut Reuse,
    only: Option<WorkItem>,
) -> Result<Gathered> {
    let from_file = sets.rows;
    if augmenters.first().map(|a| a.kind()) != Some(MethodKind::None) {
        return Err(Error::param(
            "methods",
            "the first method must be the none baseline",
            "report this as a bug",
        ));
    }
    if ds.n_classes() < 2 || ds.class_counts().iter().filter(|&&c| c > 0).count() < 2 {
        return Err(Error::data(
            format!(
                "{} has a single class; there is nothing for a probe to tell apart",
                input.path
            ),
            "assess needs at least two classes",
        ));
    }
    let thin = super::check_thin_classes(ds, cfg.folds, &input.path)?;
    for f in from_file {
        f.check_against(ds)?;
    }
    let arms = arms_of(augmenters, sets)?;
    // Classes the file's rows grow, whatever this run's plan says (for diagnostics).
    let file_classes: BTreeSet<u32> = from_file
        .iter()
        .flat_map(|f| f.labels().iter().copied())
        .collect();
    let key = ReuseKey::of(cfg);
    match &reuse.made_for {
        Some(made) if *made != key => {
            return Err(Error::param(
                "sweep",
                "the values of a sweep changed the folds, the seed or a probe setting, so the baseline cannot be shared",
                "report this as a bug",
            ));
        }
        Some(_) => {}
        None => reuse.made_for = Some(key),
    }
    let (split, folds) = match reuse.folds.take() {
        Some(made) => made,
        None => make_folds(ds, cfg.folds, cfg.repeats, cfg.seed)?,
    };
    if let Some(item) = only
        && (item.fold >= folds.len() || item.method >= arms.len())
    {
        return Err(Error::param(
            "item",
            format!(
                "step (fold {}, method {}) is not in this assessment of {} folds × {} methods",
                item.fold,
                item.method,
                folds.len(),
                arms.len()
            ),
            "ask for the steps the assessment's plan lists",
        ));
    }
    let filling = reuse.baselines.is_empty();
    let only_classes = cfg
        .classes
        .as_ref()
        .map(|n| class_indices(n, ds))
        .transpose()?;
    let unit_norm = cfg.unit_norm.resolve(ds.view());
    let knn_probe = KnnProbe::new(cfg.knn)?;
    // The centroid probe compares rows under the k-NN metric, so both see one geometry.
    let centroid_probe = CentroidProbe::new(cfg.knn.metric);
    let linear_probe = LinearProbe::new(cfg.linear)?;
    // reweight's linear probe: the same settings with balanced class weights.
    let balanced_probe = LinearProbe::new(LinearParams {
        class_weight: ClassWeight::Balanced,
        ..cfg.linear
    })?;

    let total = folds.len() * arms.len();
    let mut done = 0;
    let mut records = Vec::new();
    let mut diagnostics = Vec::new();
    let mut scatters = Vec::new();
    let mut warnings: BTreeSet<String> = thin.into_iter().collect();
    // Warnings that can arise in any fold, each with the folds it concerns, so a run prints
    // it once rather than once per fold.
    let mut fold_warnings = FoldWarnings::default();
    let mut grown_anywhere = BTreeSet::new();
    let mut work = WorkCounters::default();
    for (fi, fold) in folds.iter().enumerate() {
        if only.is_some_and(|item| item.fold != fi) {
            continue;
        }
        let ctx = FoldContext::new(ds, fold, cfg, only_classes.as_deref());
        let reused = if filling {
            None
        } else {
            reuse.baselines.get(fi)
        };
        // The k-NN probe's space: raw, or standardised on this fold's real training rows (the
        // same for every method, so the real-row neighbours are searched once per fold).
        let knn_space = cfg
            .probes
            .contains(&ProbeKind::Knn)
            .then(|| knn_probe.standardizer(ctx.train))
            .flatten();
        let knn_test = knn_space.as_ref().map(|s| s.apply(ctx.test));
        let knn_test_view = knn_test.as_ref().map_or(ctx.test, |t| Rows::all(t.view()));
        let real_knn = match reused {
            Some(b) => b.real_knn.clone(),
            None => cfg.probes.contains(&ProbeKind::Knn).then(|| {
                // Counted once per fold: by the step of `none` when steps run apart.
                work.test_real_knn_passes += usize::from(only.is_none_or(|item| item.method == 0));
                let scaled = knn_space.as_ref().map(|s| s.apply(ctx.train));
                let train = scaled
                    .as_ref()
                    .map_or(ctx.train.reborrow(), |t| Rows::all(t.view()));
                neighbors::knn(knn_test_view, train, cfg.knn.k, cfg.knn.metric)
            }),
        };
        let guard = LeakGuard::new(ctx.train, ctx.test);
        // Only the grown classes are diagnosed, so only their rows need a nearest neighbour.
        let diagnosed_classes: Vec<u32> = ctx
            .grown
            .iter()
            .copied()
            .chain(file_classes.iter().copied())
            .collect::<BTreeSet<u32>>()
            .into_iter()
            .collect();
        let diagnosed = (cfg.diagnostics && !diagnosed_classes.is_empty()).then(|| {
            TrainingRows::for_classes(
                ctx.train,
                &ctx.train_labels,
                cfg.knn.metric,
                &diagnosed_classes,
            )
        });
        let mut baseline_linear: Option<LinearModel> = None;
        let mut baseline = Vec::new();
        let train_pos = ctx.train_positions(ds.n_rows());
        for (ai, arm) in arms.iter().enumerate() {
            let kept = only.is_none_or(|item| item.method == ai);
            // `none` is fitted for another method's step only when a linear fit starts from it.
            let needed = kept || (ai == 0 && cfg.probes.contains(&ProbeKind::Linear));
            if !needed {
                continue;
            }
            let before = (!kept).then(|| {
                (
                    records.len(),
                    warnings.clone(),
                    fold_warnings.clone(),
                    work.clone(),
                )
            });
            let id = arm.id();
            on_progress(Progress {
                done,
                total,
                fold: fi + 1,
                folds: folds.len(),
                method: id.clone(),
            });
            let grown = ctx.rows_of(
                arm,
                &RowsIn {
                    ds,
                    guard: &guard,
                    train_pos: &train_pos,
                    unit_norm,
                    cfg,
                    budget: sets.config.budget,
                },
                &mut fold_warnings,
            )?;
            // Planned is not grown: a class whose method could make no row here (one row and
            // a neighbour method) must not be marked as grown.
            grown_anywhere.extend(grown.labels.iter().copied());
            let labels: Vec<u32> = ctx
                .train_labels
                .iter()
                .chain(&grown.labels)
                .copied()
                .collect();
            // Mixed rows' soft targets, aligned with `labels` (empty when every row is hard).
            let soft = data::after_hard(ctx.train.nrows(), &grown.soft, grown.x.nrows());
            let side = ProbeSide::of(&id, &cfg.augment);
            for (pi, &probe) in cfg.probes.iter().enumerate() {
                if let Some(why) = not_applicable(&id, probe) {
                    warnings.insert(why.to_string());
                    continue;
                }
                let cached = reused
                    .filter(|_| id.is_baseline())
                    .and_then(|b| b.probes.get(pi));
                let evaluated = match (cached, probe) {
                    (Some(e), _) => e.clone(),
                    (None, ProbeKind::Knn) => {
                        work.test_synthetic_knn_passes += usize::from(grown.x.nrows() > 0);
                        let scaled = knn_space.as_ref().map(|s| s.apply(grown.x.view()));
                        let synthetic = neighbors::knn(
                            knn_test_view,
                            scaled.as_ref().map_or(grown.x.view(), |g| g.view()),
                            cfg.knn.k,
                            cfg.knn.metric,
                        );
                        let real = real_knn
                            .as_ref()
                            .expect("computed when the knn probe is on");
                        let merged = shared_knn::merge(
                            real,
                            &synthetic,
                            ctx.train.nrows() as u32,
                            cfg.knn.k,
                        );
                        let pred = knn_probe.predict_soft(
                            &merged,
                            &labels,
                            &soft,
                            ds.n_classes(),
                            side == ProbeSide::Reweight,
                        );
                        Evaluated {
                            pred,
                            calibration: None,
                            converged: None,
                            model: None,
                        }
                    }
                    // A mixed row counts in its dominant class's mean only: a prototype is the
                    // mean of a class's members (see the README's `mix`).
                    (None, ProbeKind::Centroid) => Evaluated {
                        pred: centroid_probe.predict(
                            &[ctx.train.reborrow(), Rows::all(grown.x.view())],
                            &labels,
                            ds.n_classes(),
                            ctx.test,
                        )?,
                        calibration: None,
                        converged: None,
                        model: None,
                    },
                    (None, ProbeKind::Linear) => {
                        if let ProbeSide::LogitAdjust { tau } = side {
                            logit_adjusted(
                                &ctx,
                                &labels,
                                tau,
                                baseline_linear.as_ref(),
                                &linear_probe,
                                &mut work,
                            )?
                        } else {
                            let linear_probe = match side {
                                ProbeSide::Reweight => &balanced_probe,
                                _ => &linear_probe,
                            };
                            work.linear_fits += 1;
                            work.linear_warm_starts += usize::from(baseline_linear.is_some());
                            let model = linear_probe.fit_rows_soft(
                                &[ctx.train.reborrow(), Rows::all(grown.x.view())],
                                &labels,
                                &soft,
                                ds.n_classes(),
                                baseline_linear.as_ref(),
                            )?;
                            let proba = model.predict_proba(ctx.test);
                            work.linear_iterations_total += model.iterations;
                            Evaluated {
                                pred: model.predict(ctx.test),
                                calibration: Some((
                                    log_loss(&ctx.test_labels, proba.view()),
                                    ece(&ctx.test_labels, proba.view(), ECE_BINS),
                                )),
                                converged: Some(model.converged),
                                model: Some(model),
                            }
                        }
                    }
                };
                if evaluated.converged == Some(false) {
                    fold_warnings.add(not_converged(&id, cfg), fold);
                }
                records.push(ctx.record(&id, probe, &grown, &evaluated));
                if id.is_baseline() {
                    if let Some(model) = &evaluated.model {
                        baseline_linear = Some(model.clone());
                    }
                    if filling {
                        baseline.push(evaluated);
                    }
                }
            }
            // A file's rows need not follow this fold's plan: use the classes they grew.
            let classes: Vec<u32> = match arm {
                Arm::Fit(_) => ctx.grown.clone(),
                Arm::File(_) | Arm::Union(..) => grown
                    .labels
                    .iter()
                    .copied()
                    .collect::<BTreeSet<u32>>()
                    .into_iter()
                    .collect(),
            };
            if let Some(train_rows) = &diagnosed
                && !id.is_baseline()
                && grown.x.nrows() > 0
            {
                diagnostics.extend(ctx.diagnostics(&id, &grown, train_rows, &classes));
            }
            if fi == 0 && !id.is_baseline() {
                scatters.extend(scatter::class_scatters(
                    &ctx.train_set(),
                    &grown,
                    &classes,
                    &id,
                ));
            }
            if let Some((n, w, fw, wk)) = before {
                records.truncate(n);
                (warnings, fold_warnings, work) = (w, fw, wk);
            }
            done += 1;
        }
        if filling {
            reuse.baselines.push(FoldBaseline {
                real_knn,
                probes: baseline,
            });
        }
    }
    reuse.folds = Some((split, folds));
    let n_folds = reuse.folds.as_ref().map_or(0, |(_, f)| f.len());
    Ok(Gathered {
        split,
        folds: n_folds,
        methods: arms.iter().map(Arm::id).collect(),
        records,
        diagnostics,
        scatters,
        warnings,
        fold_warnings,
        grown_anywhere,
        work,
    })
}

/// The assessment's methods in order: the fitted ones (`none` first), a file's or external
/// set's rows, then the unions; refused when two share a name.
fn arms_of<'a>(augmenters: &'a [Box<dyn Augmenter>], sets: RowSets<'a>) -> Result<Vec<Arm<'a>>> {
    let from_file = sets.rows;
    let mut arms: Vec<Arm<'a>> = augmenters
        .iter()
        .map(|a| Arm::Fit(a.as_ref()))
        .chain(from_file.iter().map(Arm::File))
        .collect();
    for union in &sets.config.unions {
        let MethodId::Union(parts) = union else {
            return Err(Error::param(
                "methods",
                format!("{union} is not a union of methods"),
                "report this as a bug",
            ));
        };
        let parts = parts
            .iter()
            .map(|p| Arm::part(p, &arms[..augmenters.len() + from_file.len()], union))
            .collect::<Result<Vec<_>>>()?;
        arms.push(Arm::Union(union.clone(), parts));
    }
    let ids: Vec<MethodId> = arms.iter().map(Arm::id).collect();
    if let Some(dup) = ids
        .iter()
        .enumerate()
        .find(|(i, id)| ids[..*i].contains(id))
    {
        return Err(Error::param(
            "methods",
            format!("two methods are named '{}'", dup.1),
            "give each external set and union a name of its own",
        ));
    }
    Ok(arms)
}

/// The names of an assessment's methods, in the order its steps number them.
pub(super) fn method_ids(
    augmenters: &[Box<dyn Augmenter>],
    sets: RowSets<'_>,
) -> Result<Vec<MethodId>> {
    Ok(arms_of(augmenters, sets)?.iter().map(Arm::id).collect())
}

/// logit-adjust on the linear probe: the fold's baseline fit (the same rows and settings:
/// the method adds none), its test scores shifted by −τ·log π of the training labels. Fitted
/// here only when no baseline model was left.
fn logit_adjusted(
    ctx: &FoldContext,
    labels: &[u32],
    tau: f64,
    baseline: Option<&LinearModel>,
    probe: &LinearProbe,
    work: &mut WorkCounters,
) -> Result<Evaluated> {
    let n_classes = ctx.ds.n_classes();
    let fitted;
    let model = match baseline {
        Some(m) => m,
        None => {
            work.linear_fits += 1;
            fitted = probe.fit_rows_soft(&[ctx.train], labels, &[], n_classes, None)?;
            work.linear_iterations_total += fitted.iterations;
            &fitted
        }
    };
    let adjust = LogitAdjustment::new(labels, n_classes, tau);
    let proba = adjust.predict_proba(model, ctx.test);
    Ok(Evaluated {
        pred: adjust.predict(model, ctx.test),
        calibration: Some((
            log_loss(&ctx.test_labels, proba.view()),
            ece(&ctx.test_labels, proba.view(), ECE_BINS),
        )),
        converged: Some(model.converged),
        model: None,
    })
}

/// Why a linear fit that did not converge may not have, and what to try.
fn not_converged(method: &MethodId, cfg: &AssessConfig) -> String {
    // A larger λ helps an ill-conditioned fit; past 1 the penalty swamps the loss and its
    // scale breaks the solver, so go back down.
    let advice = if cfg.linear.l2 > 1.0 {
        format!(
            "`l2` {:e} is very large; try a smaller one (default 1e-4) or a larger `max_iter`",
            cfg.linear.l2
        )
    } else {
        "try a larger `l2` or `max_iter`".to_string()
    };
    format!(
        "the linear probe did not converge for {method} within {} iterations; {advice}",
        cfg.linear.max_iter
    )
}

/// What making a method's rows in a fold reads besides the fold itself.
struct RowsIn<'a> {
    ds: &'a Dataset,
    guard: &'a LeakGuard<'a>,
    train_pos: &'a [Option<usize>],
    unit_norm: bool,
    cfg: &'a AssessConfig,
    budget: ExternalBudget,
}

/// The real training and test rows of one fold, as row lists into the input matrix (never
/// copied out for the probes and diagnostics), and its growth plan.
struct FoldContext<'a> {
    ds: &'a Dataset,
    fold: &'a Fold,
    train: Rows<'a>,
    train_labels: Vec<u32>,
    test: Rows<'a>,
    test_labels: Vec<u32>,
    plan: Plan,
    grown: Vec<u32>,
}

impl<'a> FoldContext<'a> {
    fn new(ds: &'a Dataset, fold: &'a Fold, cfg: &AssessConfig, only: Option<&[u32]>) -> Self {
        let labels_of = |rows: &[usize]| rows.iter().map(|&i| ds.labels[i]).collect::<Vec<_>>();
        let train_labels = labels_of(&fold.train);
        let mut counts = vec![0usize; ds.n_classes()];
        for &l in &train_labels {
            counts[l as usize] += 1;
        }
        let plan = Plan::new(&counts, cfg.target, only);
        let grown = plan.grown_classes();
        FoldContext {
            ds,
            fold,
            train: Rows::picked(ds.view(), &fold.train),
            train_labels,
            test: Rows::picked(ds.view(), &fold.test),
            test_labels: labels_of(&fold.test),
            plan,
            grown,
        }
    }

    /// The training rows with their labels, as the methods and the scatter views read them.
    fn train_set(&self) -> Subset<'_> {
        Subset {
            x: self.train.reborrow(),
            labels: Cow::Borrowed(&self.train_labels),
            classes: &self.ds.classes,
        }
    }

    /// Synthetic rows for this fold's training rows; the `none` baseline adds none.
    fn grow(&self, augmenter: &dyn Augmenter, unit_norm: bool, seed: u64) -> Result<Grown> {
        let kind = augmenter.kind();
        let stream = [
            seed::tag(kind.name()),
            self.fold.repeat as u64,
            self.fold.index as u64,
        ];
        augment::grow_subset(
            &self.train_set(),
            augmenter,
            &self.plan,
            unit_norm,
            seed,
            &stream,
        )
    }

    /// A method's synthetic rows of this fold: fitted, read from a file (gated, and for an
    /// external set drawn under its budget) or the union of its parts'.
    fn rows_of(
        &self,
        arm: &Arm<'_>,
        at: &RowsIn<'_>,
        warnings: &mut FoldWarnings,
    ) -> Result<Grown> {
        match arm {
            Arm::Fit(augmenter) => {
                let grown = self.grow(*augmenter, at.unit_norm, at.cfg.seed)?;
                at.guard.check(&grown.x, augmenter.kind())?;
                for w in describe_notes(&grown.notes, &at.ds.classes, augmenter.kind()) {
                    warnings.add(w, self.fold);
                }
                Ok(grown)
            }
            Arm::File(rows) => {
                let eligible = rows.eligible(at.train_pos);
                let keep = if rows.is_external() {
                    let stream = external::stream(&rows.id(), self.fold.repeat, self.fold.index);
                    let (keep, short) = external::draw(
                        rows,
                        &eligible,
                        at.budget,
                        &self.plan,
                        at.cfg.seed,
                        &stream,
                    );
                    for s in short {
                        warnings.add(
                            format!(
                                "external set '{}' had fewer rows whose parent is a training row than the feature-space methods add to class '{}', so it adds fewer rows there",
                                rows.id(),
                                at.ds.classes[s.class as usize]
                            ),
                            self.fold,
                        );
                    }
                    keep
                } else {
                    eligible
                };
                let (grown, file_rows) = rows.take(&keep, at.train_pos);
                at.guard.check_file(&grown.x, &rows.id(), &file_rows)?;
                Ok(grown)
            }
            Arm::Union(_, parts) => {
                let mut all = Grown {
                    x: Array2::zeros((0, self.train.ncols())),
                    labels: Vec::new(),
                    provenance: Vec::new(),
                    soft: Vec::new(),
                    renormalised: false,
                    notes: Vec::new(),
                };
                for part in parts {
                    let g = self.rows_of(part, at, warnings)?;
                    data::append_soft(&mut all.soft, all.x.nrows(), &g.soft, g.x.nrows());
                    all.x = ndarray::concatenate(ndarray::Axis(0), &[all.x.view(), g.x.view()])
                        .expect("rows of one width");
                    all.labels.extend(g.labels);
                    all.provenance.extend(g.provenance);
                    all.renormalised |= g.renormalised;
                }
                Ok(all)
            }
        }
    }

    /// Each data row's position among this fold's training rows (None for test rows).
    fn train_positions(&self, n: usize) -> Vec<Option<usize>> {
        let mut pos = vec![None; n];
        for (p, &row) in self.fold.train.iter().enumerate() {
            pos[row] = Some(p);
        }
        pos
    }

    fn record(
        &self,
        method: &MethodId,
        probe: ProbeKind,
        grown: &Grown,
        evaluated: &Evaluated,
    ) -> FoldRecord {
        let n_classes = self.ds.n_classes();
        let pred = &evaluated.pred;
        let scores = score(&self.test_labels, pred, n_classes);
        let metrics = Metric::ALL
            .into_iter()
            .filter_map(|m| {
                let value = match (m, evaluated.calibration) {
                    (Metric::Accuracy, _) => scores.accuracy,
                    (Metric::BalancedAccuracy, _) => scores.balanced_accuracy,
                    (Metric::MacroF1, _) => scores.macro_f1,
                    (Metric::GrownClassRecall, _) => {
                        grown_class_recall(&scores, &self.grown).unwrap_or(f64::NAN)
                    }
                    (Metric::LogLoss, Some((loss, _))) => loss,
                    (Metric::Ece, Some((_, ece))) => ece,
                    (Metric::LogLoss | Metric::Ece, None) => return None,
                };
                Some((m, value))
            })
            .collect();
        FoldRecord {
            repeat: self.fold.repeat,
            fold: self.fold.index,
            method: method.clone(),
            probe,
            train_real: self.train.nrows(),
            train_synthetic: grown.x.nrows(),
            test: self.test.nrows(),
            metrics,
            class_recall: scores
                .per_class
                .iter()
                .map(|c| if c.support > 0 { c.recall } else { f64::NAN })
                .collect(),
            converged: evaluated.converged,
            outcome: TestOutcome {
                rows: self.fold.test.clone(),
                labels: self.test_labels.clone(),
                pred: pred.to_vec(),
            },
        }
    }

    fn diagnostics(
        &self,
        method: &MethodId,
        grown: &Grown,
        train: &TrainingRows,
        classes: &[u32],
    ) -> Vec<DiagnosticRow> {
        let rows = class_diagnostics(
            train,
            grown.x.view(),
            &grown.labels,
            self.test,
            &self.test_labels,
            classes,
        );
        rows.into_iter()
            .map(|d| DiagnosticRow {
                method: method.clone(),
                class: self.ds.classes[d.class as usize].clone(),
                synthetic_rows: d.synthetic as f64,
                intrusion_synthetic: d.intrusion_synthetic,
                intrusion_real: d.intrusion_real,
                distance_ratio: d.distance_ratio,
                distance_measure: ratio_distance_name(train.metric).to_string(),
                prdc_k: d.prdc_k as f64,
                precision: d.precision,
                recall: d.recall,
                density: d.density,
                coverage: d.coverage,
            })
            .collect()
    }
}

/// Refuses synthetic rows that copy a test row of the fold (and no training row): the mark
/// of an augmenter that saw held-out data. The fold's rows are indexed once (a [`RowIndex`]
/// copies no rows) and every method's rows are checked against them bit for bit.
struct LeakGuard<'a> {
    train: RowIndex<'a>,
    test: RowIndex<'a>,
}

impl<'a> LeakGuard<'a> {
    fn new(train: Rows<'a>, test: Rows<'a>) -> Self {
        LeakGuard {
            train: RowIndex::new(train),
            test: RowIndex::new(test),
        }
    }

    /// The first synthetic row that copies a test row and no training row.
    fn first_copy(&self, synthetic: &Array2<f32>) -> Option<usize> {
        synthetic
            .rows()
            .into_iter()
            .position(|row| self.test.contains(row) && !self.train.contains(row))
    }

    fn check(&self, synthetic: &Array2<f32>, kind: MethodKind) -> Result<()> {
        match self.first_copy(synthetic) {
            Some(i) => Err(Error::data(
                format!(
                    "{kind} produced synthetic row {i} identical to a held-out test row: the augmenter saw test data"
                ),
                "fit augmenters on the fold's training rows only",
            )),
            None => Ok(()),
        }
    }

    /// A file's row that copies a test row although its parent and partner are training rows:
    /// its provenance does not say what it was made from.
    fn check_file(
        &self,
        synthetic: &Array2<f32>,
        method: &MethodId,
        file_rows: &[usize],
    ) -> Result<()> {
        match self.first_copy(synthetic) {
            Some(i) if matches!(method, MethodId::External(_)) => Err(Error::data(
                format!(
                    "external set '{method}': row {} is identical to a held-out test row, though its parent is a training row of the fold",
                    file_rows[i]
                ),
                "its parent does not name the real row it was made from; give each row the id (or row index) of the input it augments",
            )),
            Some(i) => Err(Error::data(
                format!(
                    "{method}: the file's row {} is identical to a held-out test row, though its parent and partner are training rows of the fold",
                    file_rows[i]
                ),
                "its provenance does not name the rows it was made from; regrow the file with embloom grow",
            )),
            None => Ok(()),
        }
    }
}

/// Per-fold warnings gathered so that each is reported once with the folds it concerns.
#[derive(Default, Clone)]
pub(super) struct FoldWarnings {
    seen: std::collections::BTreeMap<String, Vec<String>>,
}

impl FoldWarnings {
    /// Each warning with its folds (as repeat.fold), for a step's part.
    pub(super) fn entries(&self) -> impl Iterator<Item = (&String, &Vec<String>)> {
        self.seen.iter()
    }

    /// Add a warning for folds named as [`FoldWarnings::entries`] gives them, keeping the
    /// order of first appearance.
    pub(super) fn add_named(&mut self, warning: String, names: &[String]) {
        let folds = self.seen.entry(warning).or_default();
        for name in names {
            if !folds.contains(name) {
                folds.push(name.clone());
            }
        }
    }

    fn add(&mut self, warning: String, fold: &Fold) {
        let name = format!("{}.{}", fold.repeat + 1, fold.index + 1);
        let folds = self.seen.entry(warning).or_default();
        if !folds.contains(&name) {
            folds.push(name);
        }
    }

    /// Each warning followed by its folds (repeat.fold), or "in every fold".
    fn finish(self, total: usize) -> Vec<String> {
        self.seen
            .into_iter()
            .map(|(w, folds)| {
                if folds.len() == total {
                    format!("{w} (in every fold)")
                } else {
                    let label = if folds.len() == 1 { "fold" } else { "folds" };
                    format!("{w} ({label} {}, as repeat.fold)", folds.join(", "))
                }
            })
            .collect()
    }
}
