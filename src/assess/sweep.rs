//! A grid over one knob of one method: the same folds and seed at every value, each point
//! compared with `none`, so the curve shows how the effect depends on the knob alone.

use std::fmt;
use std::str::FromStr;

use serde::Serialize;

use super::config::{AssessConfig, ExternalBudget, ExternalConfig, ExternalRecord};
use super::external::RowSets;
use super::from_file::FileRows;
use super::method_id::MethodId;
use super::results::InputInfo;
use super::run::{Reuse, assess_reusing};
use crate::augment::{self, MethodKind, Param, Target};
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::eval::Metric;
use crate::probe::ProbeKind;

/// The knobs a sweep can turn.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Knob {
    /// λ or the noise scale, a positive number.
    Magnitude,
    /// K same-class neighbours, a whole number of at least 1.
    Neighbours,
    /// The growth target (`median`, a row count, or a multiple such as `x2`).
    Target,
    /// The share of class variance kept by principal-noise, in (0, 1].
    VarianceKept,
    /// τ of logit-adjust, a number of at least 0.
    Tau,
    /// k of calibrated, a whole number of at least 1.
    BorrowedClasses,
    /// λ of calibrated's Tukey transform, a positive number or `off`.
    Tukey,
    /// m of borderline, a whole number of at least 1.
    DangerNeighbours,
}

impl Knob {
    /// Every knob, in the order help text lists them.
    pub const ALL: [Knob; 8] = [
        Knob::Magnitude,
        Knob::Neighbours,
        Knob::Target,
        Knob::VarianceKept,
        Knob::Tau,
        Knob::BorrowedClasses,
        Knob::Tukey,
        Knob::DangerNeighbours,
    ];

    /// The knob's name, as results.json writes it and parameter errors name it.
    pub fn name(self) -> &'static str {
        match self {
            Knob::Magnitude => "magnitude",
            Knob::Neighbours => "neighbours",
            Knob::Target => "target",
            Knob::VarianceKept => "variance-kept",
            Knob::Tau => "tau",
            Knob::BorrowedClasses => "borrowed-classes",
            Knob::Tukey => "tukey",
            Knob::DangerNeighbours => "danger-neighbours",
        }
    }

    /// The method parameter this knob sets; `None` for the target, which is not a method's.
    pub fn param(self) -> Option<Param> {
        match self {
            Knob::Magnitude => Some(Param::Magnitude),
            Knob::Neighbours => Some(Param::Neighbours),
            Knob::Target => None,
            Knob::VarianceKept => Some(Param::VarianceKept),
            Knob::Tau => Some(Param::Tau),
            Knob::BorrowedClasses => Some(Param::BorrowedClasses),
            Knob::Tukey => Some(Param::Tukey),
            Knob::DangerNeighbours => Some(Param::DangerNeighbours),
        }
    }

    /// Whether `method` reads this knob. Target is read by every method that makes rows (not by
    /// reweight or logit-adjust, which make none); the
    /// others only by the methods whose params read them, so sweeping an unused knob would
    /// print the same row at every value.
    pub fn used_by(self, method: MethodKind) -> bool {
        match self.param() {
            Some(p) => method.reads_param(p),
            None => method.makes_rows(),
        }
    }

    /// Whether this knob changes the rows of `method` (a method run in each fold, an external
    /// set, or a union of these). An external set's rows were made before the split, so no
    /// method parameter moves them; only the target does, through the `match` budget, which
    /// draws as many of them as the plan adds.
    pub fn moves(self, method: &MethodId, budget: ExternalBudget) -> bool {
        match method {
            MethodId::Kind(k) => self.used_by(*k),
            MethodId::External(_) => self == Knob::Target && budget == ExternalBudget::Match,
            MethodId::FromFile(_) => false,
            MethodId::Union(parts) => parts.iter().any(|p| self.moves(p, budget)),
        }
    }

    /// A copy of `cfg` with this knob set to `value`, validated.
    pub fn apply(self, cfg: &AssessConfig, value: &str) -> Result<AssessConfig> {
        let bad = |what: &str| {
            Error::param(
                "values",
                format!("'{value}' is not {what} for `knob` {}", self.name()),
                format!("give comma-separated values, each {what}"),
            )
        };
        let mut c = cfg.clone();
        match self {
            Knob::Magnitude => {
                c.augment.magnitude = Some(value.parse().map_err(|_| bad("a number"))?)
            }
            Knob::Neighbours => {
                c.augment.neighbours = value.parse().map_err(|_| bad("a whole number"))?
            }
            Knob::Target => c.target = value.parse::<Target>()?,
            Knob::VarianceKept => {
                c.augment.variance_kept = value.parse().map_err(|_| bad("a number"))?
            }
            Knob::Tau => c.augment.tau = value.parse().map_err(|_| bad("a number"))?,
            Knob::BorrowedClasses => {
                c.augment.borrowed_classes = value.parse().map_err(|_| bad("a whole number"))?
            }
            Knob::Tukey => c.augment.tukey = augment::parse_tukey(value)?,
            Knob::DangerNeighbours => {
                c.augment.danger_neighbours = value.parse().map_err(|_| bad("a whole number"))?
            }
        }
        Ok(c)
    }
}

impl fmt::Display for Knob {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for Knob {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        Knob::ALL
            .into_iter()
            .find(|k| k.name() == s)
            .ok_or_else(|| {
                let names: Vec<_> = Knob::ALL.iter().map(|k| k.name()).collect();
                Error::param(
                    "knob",
                    format!("unknown knob '{s}'"),
                    format!("use one of: {}", names.join(", ")),
                )
            })
    }
}

/// Where on the knob a sweep point sits: the `none` baseline, or a value as given.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum SweepValue {
    /// The baseline, written `none`: it has no knob.
    Baseline,
    /// A knob value as given on the command line.
    Given(String),
}

impl SweepValue {
    /// The value as text: `none` for the baseline.
    pub fn text(&self) -> &str {
        match self {
            SweepValue::Baseline => MethodKind::None.name(),
            SweepValue::Given(v) => v,
        }
    }
}

impl fmt::Display for SweepValue {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.text())
    }
}

/// In JSON a number when it reads as one (`0.25`, `5`), else text (`median`, `x2`, `none`).
impl Serialize for SweepValue {
    fn serialize<S: serde::Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        number_or_text(self.text(), s)
    }
}

/// One value of the knob, one probe, one metric. The `none` baseline is a point of its own,
/// with value `none` and no difference.
#[derive(Debug, Clone, Serialize)]
pub struct SweepPoint {
    /// The knob's value at this point, or `none` for the baseline.
    pub value: SweepValue,
    /// The probe the figures come from.
    pub probe: ProbeKind,
    /// The metric.
    pub metric: Metric,
    /// Mean of the metric over folds and repeats.
    pub mean: f64,
    /// Mean paired difference against the shared `none` baseline (0 for the baseline).
    pub delta_mean: f64,
    /// Lower bound of the interval on `delta_mean`; NaN when there is none.
    pub delta_ci_low: f64,
    /// Upper bound of the interval on `delta_mean`; NaN when there is none.
    pub delta_ci_high: f64,
    /// Two-sided p-value of "no difference from `none`"; NaN when there is no interval.
    pub p_value: f64,
}

/// A value that reads as a number is written as one, so a reader of the JSON can plot it.
fn number_or_text<S: serde::Serializer>(v: &str, s: S) -> std::result::Result<S::Ok, S::Error> {
    if let Ok(n) = v.parse::<u64>() {
        s.serialize_u64(n)
    } else if let Some(x) = v.parse::<f64>().ok().filter(|x| x.is_finite()) {
        s.serialize_f64(x)
    } else {
        s.serialize_str(v)
    }
}

/// Everything a sweep found.
#[derive(Debug, Clone, Serialize)]
pub struct SweepResults {
    /// The version of embloom that produced the results.
    pub embloom_version: String,
    /// The input file and its class counts.
    pub input: InputInfo,
    /// The method whose knob was turned: a method run in each fold, an external set or a
    /// union.
    pub method: MethodId,
    /// The knob turned.
    pub knob: Knob,
    /// The seed; every value shares the same folds.
    pub seed: u64,
    /// One point per value × probe × metric, the baseline first.
    pub points: Vec<SweepPoint>,
    /// The external sets swept (their files and the budget), when the method uses any.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub external: Option<ExternalRecord>,
    /// Things the user should hear about, in parameter names; the binary prints them.
    pub warnings: Vec<String>,
}

/// Assess `method` against `none` at every value of `knob`. `progress` is called after each value.
pub fn sweep(
    ds: &Dataset,
    base: &AssessConfig,
    method: MethodKind,
    knob: Knob,
    values: &[String],
    input: InputInfo,
    progress: impl FnMut(usize, &str),
) -> Result<SweepResults> {
    sweep_sets(
        ds,
        base,
        &MethodId::Kind(method),
        knob,
        values,
        input,
        RowSets::files(&[]),
        progress,
    )
}

/// [`sweep`] of a method, an external set of `sets` or a union (`flips+interpolate`): the
/// sets' rows are gated and drawn per fold as `assess` does, under `sets.config.budget`.
/// Only the sets `method` names are assessed.
#[allow(clippy::too_many_arguments)]
pub fn sweep_sets(
    ds: &Dataset,
    base: &AssessConfig,
    method: &MethodId,
    knob: Knob,
    values: &[String],
    input: InputInfo,
    sets: RowSets<'_>,
    mut progress: impl FnMut(usize, &str),
) -> Result<SweepResults> {
    let budget = sets.config.budget;
    if method.is_baseline() {
        return Err(Error::param(
            "method",
            "none has no knobs",
            "sweep a method that makes rows, such as interpolate",
        ));
    }
    let parts: Vec<MethodId> = match method {
        MethodId::Union(parts) => parts.clone(),
        other => vec![other.clone()],
    };
    let kinds: Vec<MethodKind> = parts.iter().filter_map(MethodId::kind).collect();
    let rows: Vec<FileRows> = sets
        .rows
        .iter()
        .filter(|r| r.is_external() && parts.contains(&r.id()))
        .cloned()
        .collect();
    if let Some(missing) = parts
        .iter()
        .find(|p| p.kind().is_none() && !rows.iter().any(|r| r.id() == **p))
    {
        return Err(Error::param(
            "method",
            format!("'{missing}' is neither a method nor an external set given to the sweep"),
            "give the external set with its file, or sweep a method by its name",
        ));
    }
    if !knob.moves(method, budget) {
        let used: Vec<_> = Knob::ALL
            .into_iter()
            .filter(|k| k.moves(method, budget))
            .map(|k| k.name())
            .collect();
        if used.is_empty() {
            let (why, fix) = match method {
                MethodId::Kind(_) => (
                    "it makes no rows and reads no parameter".to_string(),
                    "assess it with assess instead, or sweep a method with knobs, such as interpolate or logit-adjust",
                ),
                _ => (
                    format!(
                        "its rows were made before the split and the external budget is {budget}, so no knob changes how many are drawn"
                    ),
                    "sweep target under the match budget, or assess the set with assess instead",
                ),
            };
            return Err(Error::param(
                "method",
                format!("{method} has no knobs: {why}"),
                fix,
            ));
        }
        return Err(Error::param(
            "knob",
            format!("{method} does not use {knob}: every value would give the same rows"),
            format!("sweep one of the knobs {method} uses: {}", used.join(", ")),
        ));
    }
    let external = ExternalConfig {
        budget,
        unions: match method {
            MethodId::Union(_) => vec![method.clone()],
            _ => Vec::new(),
        },
    };
    let infos: Vec<_> = sets
        .sets
        .iter()
        .filter(|i| {
            rows.iter()
                .any(|r| r.id() == MethodId::External(i.name.clone()))
        })
        .cloned()
        .collect();
    let swept_sets = RowSets {
        rows: &rows,
        config: &external,
        sets: &infos,
    };
    if values.is_empty() {
        return Err(Error::param(
            "values",
            "no values given",
            "give at least one value, e.g. 0.25,0.5,1",
        ));
    }
    // Said once for the whole sweep (every value assesses the same rows and folds), not once
    // per value.
    let thin = super::check_thin_classes(ds, base.folds, &input.path)?;
    // Validate every value before the first (long) assessment starts.
    let configs = values
        .iter()
        .map(|v| {
            let mut c = knob.apply(base, v)?;
            c.methods = std::iter::once(MethodKind::None)
                .chain(kinds.iter().copied())
                .collect();
            c.diagnostics = false;
            c.validated()
        })
        .collect::<Result<Vec<_>>>()?;
    let mut points = Vec::new();
    // Each warning once, with the values it arose at.
    let mut warned: Vec<(String, Vec<String>)> = Vec::new();
    // Every value shares the folds and the `none` baseline: only the method's rows change.
    let mut reuse = Reuse::default();
    for (i, (value, cfg)) in values.iter().zip(&configs).enumerate() {
        let augmenters = cfg
            .methods
            .iter()
            .map(|&m| augment::build(m, &cfg.augment))
            .collect::<Result<Vec<_>>>()?;
        let r = assess_reusing(
            ds,
            cfg,
            input.clone(),
            &augmenters,
            swept_sets,
            &mut |_| {},
            &mut reuse,
        )?;
        if i == 0 {
            // Same folds and seed at every value, so the baseline is the same throughout.
            for row in r
                .summary
                .iter()
                .filter(|s| s.method.is_baseline() && Metric::HEADLINE.contains(&s.metric))
            {
                points.push(SweepPoint {
                    value: SweepValue::Baseline,
                    probe: row.probe,
                    metric: row.metric,
                    mean: row.mean,
                    delta_mean: f64::NAN,
                    delta_ci_low: f64::NAN,
                    delta_ci_high: f64::NAN,
                    p_value: f64::NAN,
                });
            }
        }
        for row in r
            .summary
            .iter()
            .filter(|s| s.method == *method && Metric::HEADLINE.contains(&s.metric))
        {
            points.push(SweepPoint {
                value: SweepValue::Given(value.clone()),
                probe: row.probe,
                metric: row.metric,
                mean: row.mean,
                delta_mean: row.delta_mean,
                delta_ci_low: row.delta_ci_low,
                delta_ci_high: row.delta_ci_high,
                p_value: row.p_value,
            });
        }
        for w in r.warnings {
            if thin.as_ref() == Some(&w) {
                continue;
            }
            match warned.iter_mut().find(|(seen, _)| *seen == w) {
                Some((_, at)) => at.push(value.clone()),
                None => warned.push((w, vec![value.clone()])),
            }
        }
        progress(i + 1, value);
    }
    let warnings = thin
        .into_iter()
        .chain(warned.into_iter().map(|(w, at)| {
            if at.len() == values.len() && values.len() > 1 {
                format!("{w} (at every {knob})")
            } else {
                format!("{knob} = {}: {w}", at.join(", "))
            }
        }))
        .collect();
    Ok(SweepResults {
        embloom_version: env!("CARGO_PKG_VERSION").to_string(),
        input,
        method: method.clone(),
        knob,
        seed: base.seed,
        points,
        external: swept_sets.record(),
        warnings,
    })
}
