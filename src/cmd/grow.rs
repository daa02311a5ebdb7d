//! `embloom grow`: write an augmented training set with provenance.

use std::path::PathBuf;

use ndarray::{Axis, concatenate};
use serde::Serialize;

use super::options::{UnitNorm, plan_for};
use crate::augment::{self, AugmentParams, FitNote, Grown, MethodKind, Plan, Target};
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::io::{self, AugmentedSet, ReadOptions};

/// Everything `grow` needs.
#[derive(Debug, Clone)]
pub struct GrowOptions {
    pub input: PathBuf,
    pub output: PathBuf,
    pub read: ReadOptions,
    pub method: MethodKind,
    pub target: Target,
    pub classes: Option<Vec<String>>,
    pub params: AugmentParams,
    pub unit_norm: UnitNorm,
    pub seed: u64,
    pub force: bool,
    pub json: bool,
    /// Refuse when the estimated peak memory exceeds this many bytes (and always when it
    /// exceeds what the system has available).
    pub max_memory: Option<u64>,
}

#[derive(Debug, Serialize)]
pub struct ClassGrowth {
    pub class: String,
    pub before: usize,
    /// Rows the plan asked for (more than `added` when the method skipped the class).
    pub planned: usize,
    pub added: usize,
    pub after: usize,
}

/// What `grow` did.
#[derive(Debug, Serialize)]
pub struct GrowSummary {
    pub input: String,
    pub output: String,
    pub method: String,
    pub target: String,
    pub seed: u64,
    pub real_rows: usize,
    pub synthetic_rows: usize,
    pub renormalised: bool,
    pub dropped_nonfinite: usize,
    pub classes: Vec<ClassGrowth>,
    pub warnings: Vec<String>,
}

impl GrowSummary {
    pub fn render(&self) -> String {
        let mut s = format!(
            "grew {} with {} to target {} (seed {}): {} real + {} synthetic rows -> {}\n",
            self.input,
            self.method,
            self.target,
            self.seed,
            self.real_rows,
            self.synthetic_rows,
            self.output
        );
        if self.renormalised {
            s += "  input rows are unit-norm: synthetic rows were renormalised to unit norm\n";
        }
        if self.dropped_nonfinite > 0 {
            s += &format!(
                "  skipped {} input rows with NaN/Inf\n",
                self.dropped_nonfinite
            );
        }
        let width = self
            .classes
            .iter()
            .map(|c| c.class.chars().count())
            .max()
            .unwrap_or(5)
            .max(5);
        s += &format!(
            "  {:<width$}  {:>7}  {:>7}  {:>7}\n",
            "class", "before", "added", "after"
        );
        for c in self.classes.iter().filter(|c| c.added > 0) {
            s += &format!(
                "  {:<width$}  {:>7}  {:>7}  {:>7}\n",
                c.class, c.before, c.added, c.after
            );
        }
        let untouched = self.classes.iter().filter(|c| c.added == 0).count();
        if untouched > 0 {
            let what = if untouched == 1 {
                "class left as it was"
            } else {
                "classes left as they were"
            };
            s += &format!("  ({untouched} {what})\n");
        }
        for w in &self.warnings {
            s += &format!("warning: {w}\n");
        }
        s += "note: synthetic rows are not observations; validate any probe trained on them on real held-out data.\n";
        s
    }
}

/// Human-readable warnings for what a fit clamped or skipped.
pub fn describe_notes(notes: &[FitNote], classes: &[String], method: MethodKind) -> Vec<String> {
    let mut skipped = Vec::new();
    let mut out = Vec::new();
    for n in notes {
        match n {
            FitNote::Clamped { class, k } => out.push(format!(
                "class '{}' has too few rows for the requested neighbours; {method} used K = {k}",
                classes[*class as usize]
            )),
            FitNote::Skipped { class, reason } => {
                skipped.push(format!("'{}' ({reason})", classes[*class as usize]))
            }
        }
    }
    if !skipped.is_empty() {
        out.push(format!(
            "{method} cannot grow {} and left {} as they are; use another method for them, or --strict to make this an error",
            skipped.join(", "),
            if skipped.len() == 1 { "it" } else { "them" }
        ));
    }
    out
}

/// Grow `ds` with one method as `plan` says; returns the synthetic rows.
pub fn grow_dataset(ds: &Dataset, plan: &Plan, opts: &GrowOptions) -> Result<Grown> {
    let method = augment::build(opts.method, &opts.params)?;
    let unit_norm = opts.unit_norm.resolve(ds.view());
    augment::grow(
        ds,
        method.as_ref(),
        plan,
        unit_norm,
        opts.seed,
        &[crate::seed::tag(opts.method.name())],
    )
}

/// Real rows first (bit-identical, in input order), then the synthetic rows, with provenance.
pub fn assemble(ds: &Dataset, grown: &Grown, method: MethodKind) -> Result<AugmentedSet> {
    let n_real = ds.n_rows();
    let n_syn = grown.x.nrows();
    let x = concatenate(Axis(0), &[ds.view(), grown.x.view()]).map_err(|e| {
        Error::data(
            format!("cannot stack synthetic rows: {e}"),
            "report this as a bug",
        )
    })?;
    let mut labels = ds.labels.clone();
    labels.extend_from_slice(&grown.labels);
    // A synthetic row mixes its parent with a partner that may sit in another fold or group,
    // so it belongs to neither: fold -1 and an empty group.
    let no_group = |v: &Option<Vec<String>>| {
        v.as_ref().map(|v| {
            let mut out = v.clone();
            out.extend(std::iter::repeat_n(String::new(), n_syn));
            out
        })
    };
    let ids = ds.ids.as_ref().map(|ids| {
        let mut out = ids.clone();
        out.extend((0..n_syn).map(|i| format!("synthetic-{i}")));
        out
    });
    let folds = ds.folds.as_ref().map(|f| {
        let mut out = f.clone();
        out.extend(std::iter::repeat_n(-1, n_syn));
        out
    });
    let data = Dataset {
        x,
        labels,
        classes: ds.classes.clone(),
        ids,
        groups: no_group(&ds.groups),
        folds,
        stored_dtype: "f32".into(),
    };
    let mut origin = vec!["real".to_string(); n_real];
    origin.extend(std::iter::repeat_n(method.name().to_string(), n_syn));
    let mut parent: Vec<i64> = (0..n_real as i64).collect();
    parent.extend(grown.provenance.iter().map(|p| p.parent as i64));
    let mut partner = vec![-1i64; n_real];
    partner.extend(
        grown
            .provenance
            .iter()
            .map(|p| p.partner.map_or(-1, |q| q as i64)),
    );
    let mut weight = vec![0.0f32; n_real];
    weight.extend(grown.provenance.iter().map(|p| p.weight));
    Ok(AugmentedSet {
        data,
        origin,
        parent,
        partner,
        weight,
    })
}

/// Refuses before growing when the job would not fit in memory.
fn check_memory(ds: &Dataset, plan: &Plan, opts: &GrowOptions) -> Result<()> {
    let est = crate::memory::for_grow(
        &opts.input,
        ds.n_rows(),
        ds.dims(),
        plan.total(),
        &opts.output,
    );
    crate::memory::check(
        &est,
        opts.max_memory,
        &format!(
            "growing {} to {} more rows",
            opts.input.display(),
            plan.total()
        ),
        "grow fewer classes (--classes A,B), choose a smaller --target (e.g. median or xF), write .csv (streamed), or raise --max-memory",
    )
}

/// Run `grow`.
pub fn grow(opts: &GrowOptions) -> Result<GrowSummary> {
    io::check_target(&opts.output, opts.force)?;
    io::output_format(&opts.output)?;
    let loaded = io::read(&opts.input, &opts.read)?;
    let ds = &loaded.dataset;
    let plan = plan_for(ds, opts.target, opts.classes.as_deref())?;
    check_memory(ds, &plan, opts)?;
    let grown = grow_dataset(ds, &plan, opts)?;
    let set = assemble(ds, &grown, opts.method)?;
    io::write(&opts.output, &set, opts.force)?;
    let counts = ds.class_counts();
    let mut added = vec![0usize; ds.n_classes()];
    for &l in &grown.labels {
        added[l as usize] += 1;
    }
    Ok(GrowSummary {
        input: opts.input.display().to_string(),
        output: opts.output.display().to_string(),
        method: opts.method.name().into(),
        target: opts.target.to_string(),
        seed: opts.seed,
        real_rows: ds.n_rows(),
        synthetic_rows: grown.x.nrows(),
        renormalised: grown.renormalised,
        dropped_nonfinite: loaded.dropped_nonfinite,
        classes: ds
            .classes
            .iter()
            .enumerate()
            .map(|(c, name)| ClassGrowth {
                class: name.clone(),
                before: counts[c],
                planned: plan.add[c],
                added: added[c],
                after: counts[c] + added[c],
            })
            .collect(),
        warnings: describe_notes(&grown.notes, &ds.classes, opts.method),
    })
}
