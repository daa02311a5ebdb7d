//! The cross-validation protocol's arguments, shared by `assess` and `sweep`.

use clap::Args;

use super::args::{MethodArgs, parse_metric};
use embloom::assess::AssessConfig;
use embloom::augment::MethodKind;
use embloom::eval::IntervalKind;
use embloom::neighbors::Metric;
use embloom::probe::ProbeKind;
use embloom::probe::{ClassWeight, LinearParams};
use embloom::probe::{KnnParams, Vote};

/// The cross-validation protocol (shared by assess and sweep).
#[derive(Args, Debug)]
pub struct ProtocolArgs {
    /// Probes: knn, linear, centroid.
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
    /// Standardise features for the k-NN probe (mean and standard deviation of each fold's
    /// real training rows; off keeps raw distances).
    #[arg(long, default_value = "off", value_parser = parse_on_off, action = clap::ArgAction::Set)]
    pub knn_standardize: bool,
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
                standardize: self.knn_standardize,
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
        }
    }
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
