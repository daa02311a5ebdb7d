//! The command line: clap arguments -> a validated library configuration -> one library
//! call -> printing. One file per command; all output, the progress bar and the human
//! sentences live here (or in the library's `report` renderers).

mod args;
pub use args::failure_text;
mod assess;
mod demo;
mod grow;
mod inspect;
mod progress;
mod protocol;
mod sweep;

use std::path::PathBuf;

use anyhow::Result;
use clap::{Parser, Subcommand};

use args::InputArgs;

/// Feature-space augmentation for embedding matrices: grow rare classes by interpolating,
/// extrapolating or adding principal-direction noise among same-class rows, and measure
/// without leakage how each method moves a k-NN or linear probe.
#[derive(Parser, Debug)]
#[command(name = "embloom", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long, global = true, value_name = "N")]
    pub threads: Option<usize>,
    /// No progress bars or summaries on stderr (errors are still printed).
    #[arg(long, short, global = true)]
    pub quiet: bool,
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Show what is in an embedding file: rows, dims, classes, norms, NaN/Inf, duplicates.
    Inspect {
        #[command(flatten)]
        input: InputArgs,
        /// Print one JSON object on stdout.
        #[arg(long)]
        json: bool,
    },
    /// Write an augmented set: every real row, then synthetic rows with provenance.
    Grow(grow::GrowArgs),
    /// Compare methods under a leakage-free cross-validation protocol (see `assess --help`).
    Assess(Box<assess::AssessArgs>),
    /// Assess one method at several values of one knob, each against `none`.
    Sweep(Box<sweep::SweepArgs>),
    /// Make the invented street-sign demo data and run inspect, grow and assess on it.
    Demo {
        /// Folder for the demo's outputs.
        #[arg(long, short, default_value = "embloom-demo-out")]
        out: PathBuf,
        /// Replace an existing output folder.
        #[arg(long)]
        force: bool,
    },
}

/// Run one parsed command.
pub fn run(cli: Cli) -> Result<()> {
    if let Some(n) = cli.threads {
        if n == 0 {
            anyhow::bail!(
                "invalid --threads: 0\n  fix: use 1 or more, or leave it out to use all cores"
            );
        }
        // Past a few threads a core, more only cost start-up time and memory.
        let cores = std::thread::available_parallelism().map_or(1, |c| c.get());
        let n = if n > 4 * cores {
            eprintln!(
                "note: --threads {n} is more than 4 per core on this machine ({cores} cores); using {}",
                4 * cores
            );
            4 * cores
        } else {
            n
        };
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build_global()?;
    }
    let quiet = cli.quiet;
    match cli.command {
        Command::Inspect { input, json } => {
            inspect::inspect(&input.file, &input.read_options(), json)?
        }
        Command::Grow(g) => grow::run(g, quiet)?,
        Command::Assess(a) => assess::run(*a, quiet)?,
        Command::Sweep(a) => sweep::run(*a, quiet)?,
        Command::Demo { out, force } => demo::demo(&out, force, quiet)?,
    }
    // For tests/cli/hardening_memory.rs: the measured peak, to hold the estimate against.
    if std::env::var_os("EMBLOOM_REPORT_PEAK").is_some()
        && let Some(peak) = embloom::memory::peak_resident()
    {
        eprintln!("embloom-peak-bytes: {peak}");
    }
    Ok(())
}
