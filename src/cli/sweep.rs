//! `embloom sweep`: one method, one knob, several values, each assessed against `none`.

use std::path::PathBuf;

use clap::Args;
use indicatif::ProgressBar;

use super::args::{InputArgs, MethodArgs, parse_method};
use super::assess::load;
use super::progress::show_progress;
use super::protocol::ProtocolArgs;
use embloom::assess::{AssessConfig, Knob, SweepResults, check_thin_classes, sweep};
use embloom::augment::MethodKind;
use embloom::error::{Error, Result};
use embloom::io::{self, ReadOptions, write_atomically};

/// Assess one method at several values of one knob (same folds and seed at every value),
/// each against `none`.
#[derive(Args, Debug)]
pub struct SweepArgs {
    #[command(flatten)]
    pub input: InputArgs,
    /// The method whose knob is turned.
    #[arg(long, value_parser = parse_method)]
    pub method: MethodKind,
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
    let config = a
        .protocol
        .config(vec![MethodKind::None, a.method], &a.how, false);
    let opts = SweepOptions {
        input: a.input.file.clone(),
        read: a.input.read_options(),
        config,
        method: a.method,
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
    pub method: MethodKind,
    pub knob: Knob,
    pub values: Vec<String>,
    pub csv: Option<PathBuf>,
    pub force: bool,
}

/// Run a sweep and write its CSV when asked; also gives the thin-class warning printed on
/// stderr before the work (it stays in the results).
pub fn execute(opts: &SweepOptions, show_progress: bool) -> Result<(SweepResults, Option<String>)> {
    if let Some(csv) = &opts.csv {
        let inputs = io::output_target::inputs_of(&opts.input, &opts.read);
        io::output_target::check_file(csv, opts.force, &inputs, None)?;
    }
    let loaded = load(&opts.input, &opts.read)?;
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
    let mut results = sweep(
        ds,
        &config,
        opts.method,
        opts.knob,
        &opts.values,
        loaded.info.clone(),
        |done, value| {
            bar.set_position(done as u64);
            bar.set_message(format!("{} = {value}", opts.knob));
        },
    )?;
    bar.finish_and_clear();
    results.warnings.extend(clamped);
    results.warnings.extend(loaded.file.left_out.clone());
    results.warnings.extend(not_swept(&loaded.file));
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
