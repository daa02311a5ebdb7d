//! Arguments of `embloom assess`.

use std::path::PathBuf;

use anyhow::Result;
use clap::Args;

use crate::cli::{InputArgs, MethodArgs, parse_method, parse_metric};
use embloom::assess::{AssessConfig, Knob};
use embloom::augment::MethodKind;
use embloom::cmd;
use embloom::eval::IntervalKind;
use embloom::neighbors::Metric;
use embloom::probe::ProbeKind;
use embloom::probe::{ClassWeight, LinearParams};
use embloom::probe::{KnnParams, Vote};

/// The cross-validation protocol (shared by assess and sweep).
#[derive(Args, Debug)]
pub struct ProtocolArgs {
    /// Probes: knn, linear.
    #[arg(long, value_delimiter = ',', default_value = "knn,linear", value_parser = parse_probe)]
    pub probes: Vec<ProbeKind>,
    /// Number of folds (ignored when the file carries a fold assignment).
    #[arg(long, default_value_t = 5)]
    pub folds: usize,
    /// Repeat the k-fold split with fresh shuffles (not for given folds).
    #[arg(long, default_value_t = 1)]
    pub repeats: usize,
    /// k of the k-NN probe.
    #[arg(long, default_value_t = 10)]
    pub knn_k: usize,
    /// Metric of the k-NN probe.
    #[arg(long, default_value = "cosine", value_parser = parse_metric)]
    pub knn_metric: Metric,
    /// Vote of the k-NN probe: uniform, or weighted by exp(similarity / temperature).
    #[arg(long, default_value = "uniform", value_parser = parse_vote)]
    pub knn_vote: Vote,
    /// Temperature of the weighted vote (Wu et al. 2018 use 0.07).
    #[arg(long, default_value_t = 0.07)]
    pub knn_temperature: f32,
    /// L2 penalty λ of the linear probe (objective: mean cross-entropy + λ/2·‖W‖²).
    #[arg(long, default_value_t = 1e-4)]
    pub linear_l2: f64,
    /// Standardise features for the linear probe (fitted on each fold's training rows).
    #[arg(long, default_value = "on", value_parser = parse_on_off, action = clap::ArgAction::Set)]
    pub linear_standardize: bool,
    /// Class weights of the linear probe: none, balanced.
    #[arg(long, default_value = "none", value_parser = parse_class_weight)]
    pub linear_class_weight: ClassWeight,
    /// Iteration cap of the linear probe's L-BFGS solver.
    #[arg(long, default_value_t = 500)]
    pub linear_max_iter: usize,
    /// Interval of each paired difference: corrected-t (Nadeau & Bengio 2003 over fold
    /// scores; Bouckaert & Frank 2004 with repeats), cv-clt (central limit over test rows
    /// pooled across folds, Bayle et al. 2020), cv-clt-folds (cv-clt plus the training-set
    /// variance the folds show) or bootstrap (paired, over test rows within folds and
    /// classes). The default was chosen by a coverage simulation (see the README).
    #[arg(long, default_value = "corrected-t", value_parser = parse_interval)]
    pub interval: IntervalKind,
}

impl ProtocolArgs {
    /// The assessment configuration for these options and `how` rows are made.
    pub fn config(
        &self,
        methods: Vec<MethodKind>,
        how: &MethodArgs,
        diagnostics: bool,
        quiet: bool,
    ) -> AssessConfig {
        AssessConfig {
            methods,
            probes: self.probes.clone(),
            folds: self.folds,
            repeats: self.repeats,
            target: how.target,
            classes: how.classes.clone(),
            augment: how.params(),
            unit_norm: how.unit_norm,
            knn: KnnParams {
                k: self.knn_k,
                metric: self.knn_metric,
                vote: self.knn_vote,
                temperature: self.knn_temperature,
            },
            linear: LinearParams {
                l2: self.linear_l2,
                standardize: self.linear_standardize,
                class_weight: self.linear_class_weight,
                max_iter: self.linear_max_iter,
                ..LinearParams::default()
            },
            interval: self.interval,
            seed: how.seed,
            diagnostics,
            progress: cmd::options::show_progress(quiet),
        }
    }
}

/// Compare methods on k-NN and linear probes under stratified (or grouped, or given) k-fold
/// cross-validation: each augmenter is fitted on a fold's real training rows only, and
/// probes are scored on real held-out rows only. Differences against `none` are paired per
/// fold, with 95% intervals (see --interval).
#[derive(Args, Debug)]
pub struct AssessArgs {
    #[command(flatten)]
    pub input: InputArgs,
    /// Methods to compare (none, the baseline, is always included).
    #[arg(long, value_delimiter = ',', default_value = "none,interpolate,extrapolate,principal-noise", value_parser = parse_method)]
    pub methods: Vec<MethodKind>,
    #[command(flatten)]
    pub protocol: ProtocolArgs,
    #[command(flatten)]
    pub how: MethodArgs,
    /// Skip the intrusion, distance and precision/recall/density/coverage diagnostics.
    #[arg(long)]
    pub no_diagnostics: bool,
    /// Write results.json, CSV tables and report.html to this folder.
    #[arg(long, value_name = "DIR")]
    pub report: Option<PathBuf>,
    /// Replace an existing report folder.
    #[arg(long)]
    pub force: bool,
    /// Print results.json on stdout instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Refuse the job when its estimated peak memory exceeds SIZE (e.g. 4G, 512M); it is
    /// always refused when it exceeds the memory the system has available.
    #[arg(long, value_name = "SIZE", value_parser = crate::cli::parse_size)]
    pub max_memory: Option<u64>,
}

/// Assess one method at several values of one knob (same folds and seed at every value),
/// each against `none`.
#[derive(Args, Debug)]
pub struct SweepArgs {
    #[command(flatten)]
    pub input: InputArgs,
    /// The method whose knob is turned.
    #[arg(long, value_parser = parse_method)]
    pub method: MethodKind,
    /// magnitude, neighbours, target or variance-kept.
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

fn parse_knob(s: &str) -> Result<Knob, String> {
    s.parse().map_err(|e: embloom::Error| e.to_string())
}

fn parse_interval(s: &str) -> Result<IntervalKind, String> {
    IntervalKind::parse(s).ok_or_else(|| {
        let names: Vec<&str> = IntervalKind::ALL.iter().map(|k| k.name()).collect();
        format!("'{s}' is not an interval; use one of {}", names.join(", "))
    })
}
fn parse_probe(s: &str) -> Result<ProbeKind, String> {
    s.parse().map_err(|e: embloom::Error| e.to_string())
}
fn parse_vote(s: &str) -> Result<Vote, String> {
    match s {
        "uniform" => Ok(Vote::Uniform),
        "weighted" => Ok(Vote::Weighted),
        _ => Err(format!("'{s}' is not a vote; use uniform or weighted")),
    }
}
fn parse_on_off(s: &str) -> Result<bool, String> {
    match s {
        "on" => Ok(true),
        "off" => Ok(false),
        _ => Err(format!("'{s}': use on or off")),
    }
}
fn parse_class_weight(s: &str) -> Result<ClassWeight, String> {
    match s {
        "none" => Ok(ClassWeight::None),
        "balanced" => Ok(ClassWeight::Balanced),
        _ => Err(format!("'{s}': use none or balanced")),
    }
}

pub fn run(a: AssessArgs, quiet: bool) -> Result<()> {
    let config = a
        .protocol
        .config(a.methods.clone(), &a.how, !a.no_diagnostics, quiet);
    let opts = cmd::assess::AssessOptions {
        input: a.input.file.clone(),
        read: a.input.read_options(),
        config,
        report: a.report.clone(),
        force: a.force,
        max_memory: a.max_memory,
    };
    let results = cmd::assess::run(&opts)?;
    if a.json {
        println!("{}", serde_json::to_string_pretty(&results)?);
    } else {
        print!("{}", embloom::report::terminal_table(&results));
        if let Some(dir) = &a.report
            && !quiet
        {
            eprintln!("report written to {}", dir.display());
        }
    }
    Ok(())
}

pub fn run_sweep(a: SweepArgs, quiet: bool) -> Result<()> {
    let config = a
        .protocol
        .config(vec![MethodKind::None, a.method], &a.how, false, quiet);
    let opts = cmd::sweep::SweepOptions {
        input: a.input.file.clone(),
        read: a.input.read_options(),
        config,
        method: a.method,
        knob: a.knob,
        values: a.values.clone(),
        csv: a.csv.clone(),
        force: a.force,
    };
    let results = cmd::sweep::run(&opts)?;
    if a.json {
        println!("{}", serde_json::to_string_pretty(&results)?);
    } else {
        print!("{}", embloom::report::sweep_table(&results));
    }
    Ok(())
}
