//! `embloom grow`: write an augmented training set with provenance.

use std::path::PathBuf;

use clap::Args;
use serde::Serialize;

use super::args::{InputArgs, MethodArgs, flag_text, method_help, parse_method, parse_size};
use embloom::augment::{
    AugmentParams, MethodKind, Plan, Target, UnitNorm, assemble_owned, describe_notes,
    grow_dataset, plan_for,
};
use embloom::error::Result;
use embloom::io::{self, ReadOptions};

/// Arguments of `embloom grow`.
#[derive(Args, Debug)]
pub struct GrowArgs {
    #[command(flatten)]
    pub input: InputArgs,
    /// Output file; its extension picks the format (.npz, .csv, .tsv, .safetensors, .h5,
    /// .parquet, .arrow).
    #[arg(long, short)]
    pub output: PathBuf,
    #[arg(long, value_parser = parse_method, help = method_help())]
    pub method: MethodKind,
    #[command(flatten)]
    pub how: MethodArgs,
    /// Replace an existing output file.
    #[arg(long)]
    pub force: bool,
    /// Print the summary as JSON on stdout.
    #[arg(long)]
    pub json: bool,
    /// Refuse the job when its estimated peak memory exceeds SIZE (e.g. 4G, 512M); it is
    /// always refused when it exceeds the memory the system has available.
    #[arg(long, value_name = "SIZE", value_parser = parse_size)]
    pub max_memory: Option<u64>,
}

/// Run `embloom grow` and print its summary (or JSON).
pub fn run(g: GrowArgs, quiet: bool) -> anyhow::Result<()> {
    let opts = GrowOptions {
        input: g.input.file.clone(),
        output: g.output.clone(),
        read: ReadOptions {
            max_memory: g.max_memory,
            ..g.input.read_options()
        },
        method: g.method,
        target: g.how.target,
        classes: g.how.classes.clone(),
        params: g.how.params(),
        unit_norm: g.how.unit_norm,
        seed: g.how.seed,
        force: g.force,
        max_memory: g.max_memory,
    };
    let summary = execute(&opts)?;
    if g.json {
        println!("{}", serde_json::to_string_pretty(&summary)?);
    } else if !quiet {
        eprint!("{}", summary.render());
    }
    Ok(())
}

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
            .map(|c| embloom::report::table_name(&c.class).chars().count())
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
                embloom::report::table_name(&c.class),
                c.before,
                c.added,
                c.after
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
            s += &format!("warning: {}\n", embloom::report::display_text(w, 400, 20));
        }
        s += "note: synthetic rows are not observations; validate any probe trained on them on real held-out data.\n";
        s
    }
}

/// Refuses before growing when the job would not fit in memory.
fn check_memory(ds: &embloom::Dataset, plan: &Plan, opts: &GrowOptions) -> Result<()> {
    let mut est = embloom::memory::for_grow(
        &opts.input,
        ds.n_rows(),
        ds.dims(),
        plan.total(),
        &opts.output,
        ds.float_type,
    );
    if opts.method == MethodKind::Calibrated {
        let lenders: Vec<usize> = plan
            .add
            .iter()
            .zip(ds.class_counts())
            .filter(|(add, _)| **add == 0)
            .map(|(_, count)| count)
            .collect();
        est = est.with_lenders(&lenders, ds.dims(), rayon::current_num_threads());
    }
    if opts.method == MethodKind::Mix {
        est = est.with_partner_rows(ds.n_rows(), ds.dims());
    }
    embloom::memory::check(
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

/// A note when the input's carried columns have no place in the output's format.
fn left_out(loaded: &io::Loaded, output: &std::path::Path) -> Option<String> {
    let names = loaded.carried.as_ref()?.names();
    let columnar = matches!(
        io::Format::of(output),
        Ok(io::Format::Parquet | io::Format::Arrow)
    );
    (!columnar && !names.is_empty()).then(|| {
        let quoted: Vec<String> = names.iter().map(|n| format!("'{n}'")).collect();
        format!(
            "input columns {} are left out: only a .parquet or .arrow output carries them",
            quoted.join(", ")
        )
    })
}

/// Grow the file and describe what was done.
pub fn execute(opts: &GrowOptions) -> Result<GrowSummary> {
    let inputs = io::output_target::inputs_of(&opts.input, &opts.read);
    io::output_target::check_file(&opts.output, opts.force, &inputs, None)?;
    io::output_format(&opts.output)?;
    let loaded = io::read(&opts.input, &opts.read)?;
    let ds = &loaded.dataset;
    embloom::neighbors::magnitude::check(&opts.input, ds.x.view())?;
    let plan = plan_for(ds, opts.target, opts.classes.as_deref())?;
    let bytes = io::output_target::output_bytes(
        &opts.output,
        ds.n_rows() + plan.total(),
        ds.dims(),
        ds.float_type.bytes(),
    );
    io::output_target::check_file(&opts.output, opts.force, &inputs, Some(bytes))?;
    check_memory(ds, &plan, opts)?;
    let grown = grow_dataset(
        ds,
        &plan,
        opts.method,
        &opts.params,
        opts.unit_norm,
        opts.seed,
    )?;
    let counts = ds.class_counts();
    let mut added = vec![0usize; ds.n_classes()];
    for &l in &grown.labels {
        added[l as usize] += 1;
    }
    let summary = GrowSummary {
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
        warnings: loaded
            .notes
            .iter()
            .cloned()
            .chain(left_out(&loaded, &opts.output))
            .chain(
                describe_notes(&grown.notes, &ds.classes, opts.method)
                    .iter()
                    .map(|w| flag_text(w)),
            )
            .collect(),
    };
    // The input is handed over so the synthetic rows extend its matrix in place: the real
    // rows are held once, not again in a stacked copy.
    let carried = loaded.carried;
    let set = assemble_owned(loaded.dataset, &grown, opts.method)?;
    drop(grown);
    io::write_carrying(&opts.output, &set, opts.force, carried.as_ref())?;
    Ok(summary)
}
