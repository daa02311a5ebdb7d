//! `embloom sweep`: one method, one knob, several values, each assessed against `none`.

use std::path::PathBuf;

use clap::Args;
use indicatif::ProgressBar;

use super::args::{
    ExternalArgs, InputArgs, MethodArgs, MethodEntry, parse_method_entry, split_methods,
};
use super::assess::{load, with_external};
use super::progress::show_progress;
use super::protocol::ProtocolArgs;
use embloom::assess::{
    AssessConfig, ExternalConfig, Knob, MethodId, RowSets, SweepResults, check_thin_classes,
    sweep_sets,
};
use embloom::augment::MethodKind;
use embloom::error::{Error, Result};
use embloom::io::{self, ReadOptions, write_atomically};

/// Assess one method at several values of one knob (same folds and seed at every value),
/// each against `none`.
#[derive(Args, Debug)]
pub struct SweepArgs {
    #[command(flatten)]
    pub input: InputArgs,
    /// The method whose knob is turned; also an external set's name (only target moves it,
    /// under --external-budget match) or a union joined by + (e.g. flips+interpolate).
    #[arg(long, value_parser = parse_method_entry)]
    pub method: MethodEntry,
    #[command(flatten)]
    pub external: ExternalArgs,
    /// magnitude, neighbours, target, variance-kept, tau, borrowed-classes, tukey or
    /// danger-neighbours.
    #[arg(long, value_parser = parse_knob)]
    pub knob: Knob,
    /// The values to try, comma-separated (e.g. 0.25,0.5,1 or median,largest).
    #[arg(long, value_delimiter = ',', required = true)]
    pub values: Vec<String>,
    #[command(flatten)]
    pub protocol: ProtocolArgs,
    #[command(flatten)]
    pub how: MethodArgs,
    /// Also write the points as CSV to this file.
    #[arg(long, value_name = "FILE")]
    pub csv: Option<PathBuf>,
    /// Replace an existing CSV file.
    #[arg(long)]
    pub force: bool,
    /// Print the results as JSON on stdout instead of the table.
    #[arg(long)]
    pub json: bool,
}

fn parse_knob(s: &str) -> std::result::Result<Knob, String> {
    s.parse()
        .map_err(|e: embloom::Error| super::args::error_text(&e))
}

/// Run `embloom sweep` and print its table (or JSON).
pub fn run(a: SweepArgs, quiet: bool) -> anyhow::Result<()> {
    // Refuses a name that is neither a method nor one of the external sets.
    split_methods(std::slice::from_ref(&a.method), &a.external.external)?;
    let method = match &a.method {
        MethodEntry::Kind(k) => MethodId::Kind(*k),
        MethodEntry::Named(id) => id.clone(),
    };
    let config = a.protocol.config(vec![MethodKind::None], &a.how, false);
    let opts = SweepOptions {
        input: a.input.file.clone(),
        read: a.input.read_options(),
        config,
        method,
        external: a.external.external.clone(),
        external_config: ExternalConfig {
            budget: a.external.external_budget,
            unions: Vec::new(),
        },
        knob: a.knob,
        values: a.values.clone(),
        csv: a.csv.clone(),
        force: a.force,
    };
    let (results, thin) = execute(&opts, show_progress(quiet))?;
    if a.json {
        println!("{}", serde_json::to_string_pretty(&results)?);
    } else {
        // The thin-class warning was printed before the work; it is not repeated under the table.
        let mut shown = results.clone();
        shown.warnings.retain(|w| Some(w) != thin.as_ref());
        print!("{}", embloom::report::sweep_table(&shown));
    }
    Ok(())
}

#[derive(Debug, Clone)]
pub struct SweepOptions {
    pub input: PathBuf,
    pub read: ReadOptions,
    pub config: AssessConfig,
    pub method: MethodId,
    /// External sets by name and file, read as `assess --external` reads them.
    pub external: Vec<(String, PathBuf)>,
    /// The budget the external sets are drawn under (the union, if any, is the method).
    pub external_config: ExternalConfig,
    pub knob: Knob,
    pub values: Vec<String>,
    pub csv: Option<PathBuf>,
    pub force: bool,
}

/// Run a sweep and write its CSV when asked; also gives the thin-class warning printed on
/// stderr before the work (it stays in the results).
pub fn execute(opts: &SweepOptions, show_progress: bool) -> Result<(SweepResults, Option<String>)> {
    if let Some(csv) = &opts.csv {
        let mut inputs = io::output_target::inputs_of(&opts.input, &opts.read);
        inputs.extend(opts.external.iter().map(|(_, p)| p.as_path()));
        io::output_target::check_file(csv, opts.force, &inputs, None)?;
    }
    let mut loaded = load(&opts.input, &opts.read)?;
    let not_swept_notes = not_swept(&loaded.file);
    let (rows, sets) = with_external(&mut loaded, &opts.external, &opts.read)?;
    let ds = &loaded.file.real;
    let mut config = opts.config.clone();
    // Checked again by the library; here so the warning comes before the work.
    let thin = check_thin_classes(ds, config.folds, &loaded.info.path)?
        .map(|w| super::args::flag_text(&w));
    let clamped = super::assess::clamp_knn_k(&mut config, ds.n_rows());
    if let Some(w) = &thin {
        eprintln!("warning: {w}");
    }
    let bar = if show_progress {
        ProgressBar::new(opts.values.len() as u64)
    } else {
        ProgressBar::hidden()
    };
    let mut results = sweep_sets(
        ds,
        &config,
        &opts.method,
        opts.knob,
        &opts.values,
        loaded.info.clone(),
        RowSets {
            rows: &rows,
            config: &opts.external_config,
            sets: &sets,
        },
        |done, value| {
            bar.set_position(done as u64);
            bar.set_message(format!("{} = {value}", opts.knob));
        },
    )?;
    bar.finish_and_clear();
    results.warnings.extend(clamped);
    results.warnings.extend(loaded.file.left_out.clone());
    results.warnings.extend(not_swept_notes);
    results.warnings = results
        .warnings
        .iter()
        .map(|w| super::args::flag_text(w))
        .collect();
    if let Some(csv) = &opts.csv {
        let text = embloom::report::sweep_csv(&results);
        write_atomically(csv, opts.force, |tmp| {
            std::fs::write(tmp, text.as_bytes()).map_err(|e| Error::io(tmp, e))
        })?;
    }
    Ok((results, thin))
}

/// A sweep turns a knob of a method it fits in each fold; a grown file's rows were made once,
/// with one setting, so no knob moves them and they are not part of the sweep. Saying so keeps
/// a reader from taking the sweep for a comparison with the file's rows.
fn not_swept(file: &embloom::assess::GrownFile) -> Vec<String> {
    file.methods
        .iter()
        .map(|m| {
            format!(
                "the input is a grown file: its {} synthetic rows ('{}') are not part of the sweep (no knob changes them) and only its real rows were swept; `embloom assess` on the file compares them with none",
                m.n_rows(),
                m.id()
            )
        })
        .collect()
}
