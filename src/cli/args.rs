//! Arguments shared by several commands: where the data is, how rows are made, and the
//! parsers that turn flag text into the library's typed values.

use std::path::PathBuf;

use clap::Args;

use embloom::augment::{AugmentParams, MethodKind, Param, Target, UnitNorm};
use embloom::io::ReadOptions;
use embloom::neighbors::{IndexKind, Metric};

/// Where the data is and which keys hold it.
#[derive(Args, Debug, Clone)]
pub struct InputArgs {
    /// Embedding file: .npy, .npz, .csv, .tsv, .safetensors, .h5/.hdf5 (with the hdf5 feature).
    pub file: PathBuf,
    /// Labels for a .npy embedding file (a second .npy).
    #[arg(long, value_name = "FILE")]
    pub labels: Option<PathBuf>,
    /// npz member, safetensors tensor or HDF5 dataset path of the embeddings.
    #[arg(long, default_value = "embeddings", value_name = "KEY")]
    pub embeddings_key: String,
    /// npz member, safetensors tensor or HDF5 dataset path of the labels.
    #[arg(long, default_value = "labels", value_name = "KEY")]
    pub labels_key: String,
    /// CSV/TSV column holding the labels.
    #[arg(long, default_value = "label", value_name = "NAME")]
    pub label_column: String,
    /// Member or column holding a fold assignment (used by assess when present).
    #[arg(long, default_value = "fold", value_name = "NAME")]
    pub fold_key: String,
    /// Skip rows with NaN/Inf instead of refusing the file.
    #[arg(long)]
    pub drop_nonfinite: bool,
}

impl InputArgs {
    pub fn read_options(&self) -> ReadOptions {
        ReadOptions {
            labels_file: self.labels.clone(),
            embeddings_key: self.embeddings_key.clone(),
            labels_key: self.labels_key.clone(),
            label_column: self.label_column.clone(),
            fold_key: self.fold_key.clone(),
            drop_nonfinite: self.drop_nonfinite,
            ..ReadOptions::default()
        }
    }
}

/// How synthetic rows are made (shared by grow and assess).
#[derive(Args, Debug, Clone)]
pub struct MethodArgs {
    /// Grow each class to: largest, median (the upper median for an even number of classes),
    /// a count N, or a factor xF of its own size.
    #[arg(long, default_value = "median", value_parser = parse_target)]
    pub target: Target,
    /// Grow only these classes: comma-separated names, or repeat --classes (a value that names
    /// a class exactly is taken whole, so a name holding a comma can be given).
    #[arg(long, action = clap::ArgAction::Append, value_name = "A,B")]
    pub classes: Option<Vec<String>>,
    #[arg(long, default_value_t = AugmentParams::default().neighbours, value_name = "K",
          help = param_help(Param::Neighbours, "K nearest same-class neighbours"))]
    pub neighbours: usize,
    #[arg(long, value_name = "X",
          help = param_help(Param::Magnitude, "λ of extrapolate, noise scale of the noise methods"))]
    pub magnitude: Option<f32>,
    #[arg(long, default_value_t = AugmentParams::default().variance_kept, value_name = "FRAC",
          help = param_help(Param::VarianceKept, "Share of a class's variance the principal directions must explain"))]
    pub variance_kept: f64,
    #[arg(long, default_value = "euclidean", value_parser = parse_metric,
          help = param_help(Param::NeighbourMetric, "Metric for same-class neighbours"))]
    pub neighbour_metric: Metric,
    /// Renormalise synthetic rows to unit norm: auto (when the input rows are), on, off.
    #[arg(long, default_value = "auto", value_parser = parse_unit_norm)]
    pub unit_norm: UnitNorm,
    #[arg(long, default_value = "exact", value_parser = parse_index,
          help = param_help(Param::NeighbourIndex, "Same-class neighbour search: exact, or kdtree (approximate: a k-d tree over the leading principal components, for very large classes)"))]
    pub neighbour_index: IndexKind,
    #[arg(long, default_value_t = AugmentParams::default().tau, value_name = "T",
          help = param_help(Param::Tau, "Scale τ of the shift by −τ·log(class prior) of the linear probe's scores"))]
    pub tau: f64,
    /// Make classes a method cannot grow (e.g. a single row) an error instead of a warning.
    #[arg(long)]
    pub strict: bool,
    /// Seed for every random choice; the same seed gives the same output on any thread count.
    #[arg(long, default_value_t = 0)]
    pub seed: u64,
}

impl MethodArgs {
    pub fn params(&self) -> AugmentParams {
        AugmentParams {
            neighbours: self.neighbours,
            magnitude: self.magnitude,
            variance_kept: self.variance_kept,
            metric: self.neighbour_metric,
            strict: self.strict,
            index: self.neighbour_index,
            tau: self.tau,
        }
    }
}

/// The flag spelling of each library parameter name the command line sets, and what the
/// binary adds to the library's fix (the library knows nothing of flags, so a fix that needs
/// one is completed here).
const FLAGS: &[(&str, &str, &str)] = &[
    ("target", "--target", ""),
    (
        "classes",
        "--classes",
        "repeat --classes to give a name holding a comma",
    ),
    ("neighbours", "--neighbours", ""),
    ("magnitude", "--magnitude", ""),
    ("variance-kept", "--variance-kept", ""),
    ("neighbour-metric", "--neighbour-metric", ""),
    ("neighbour-index", "--neighbour-index", ""),
    ("strict", "--strict", ""),
    ("tau", "--tau", ""),
    ("unit-norm", "--unit-norm", ""),
    ("probes", "--probes", ""),
    ("folds", "--folds", ""),
    ("repeats", "--repeats", ""),
    ("max-memory", "--max-memory", ""),
    ("k", "--knn-k", ""),
    ("temperature", "--knn-temperature", ""),
    ("l2", "--linear-l2", ""),
    ("max_iter", "--linear-max-iter", ""),
];

/// A library error as the command line prints it: parameters by their flags, a memory limit
/// the user gave by `--max-memory`, and fixes completed with the flag to use.
pub fn error_text(e: &embloom::Error) -> String {
    use embloom::error::{Limit, LimitSource};
    match e {
        embloom::Error::Param { name, detail, fix } => {
            let (flag, extra) = FLAGS
                .iter()
                .find(|(n, ..)| n == name)
                .map_or((name.as_str(), ""), |(_, f, x)| (*f, *x));
            let fix = if extra.is_empty() {
                fix.clone()
            } else {
                format!("{fix} ({extra})")
            };
            format!("invalid {flag}: {detail}\n  fix: {fix}")
        }
        embloom::Error::Resource {
            what,
            resource,
            needed,
            limit:
                Limit {
                    source: LimitSource::Given,
                    bytes,
                },
            fix,
            ..
        } => format!(
            "{what} would need about {needed} of {resource}, more than --max-memory ({})\n  fix: {fix}",
            embloom::memory::human(*bytes)
        ),
        other => other.to_string(),
    }
}

/// The binary's text for a failed command: [`error_text`] for a library error on its own,
/// anyhow's chain otherwise.
pub fn failure_text(err: &anyhow::Error) -> String {
    match err.downcast_ref::<embloom::Error>() {
        Some(e) if err.chain().count() == 1 => error_text(e),
        _ => format!("{err:#}"),
    }
}

pub fn parse_size(s: &str) -> Result<u64, String> {
    embloom::memory::parse_size(s).map_err(|e| error_text(&e))
}

pub fn parse_target(s: &str) -> Result<Target, String> {
    s.parse().map_err(|e: embloom::Error| error_text(&e))
}
/// The help of a shared method parameter's flag: `what`, then the methods whose params read
/// it (from the registry, so a new method shows up without editing this file), with their
/// default magnitudes.
fn param_help(param: Param, what: &str) -> String {
    let users: Vec<String> = MethodKind::ALL
        .into_iter()
        .filter(|m| m.reads_param(param))
        .map(|m| match param {
            Param::Magnitude => format!("{} (default {})", m.name(), m.default_magnitude()),
            _ => m.name().to_string(),
        })
        .collect();
    format!("{what}; read by {}", users.join(", "))
}

/// The `--method` help, from the method registry: each method's name and what it does.
pub fn method_help() -> String {
    let lines: Vec<_> = MethodKind::ALL
        .into_iter()
        .map(|m| format!("{}: {}", m.name(), m.help()))
        .collect();
    lines.join("; ")
}

pub fn parse_method(s: &str) -> Result<MethodKind, String> {
    s.parse().map_err(|e: embloom::Error| error_text(&e))
}
pub fn parse_unit_norm(s: &str) -> Result<UnitNorm, String> {
    s.parse().map_err(|e: embloom::Error| error_text(&e))
}
pub fn parse_metric(s: &str) -> Result<Metric, String> {
    match s {
        "cosine" => Ok(Metric::Cosine),
        "euclidean" => Ok(Metric::Euclidean),
        _ => Err(format!("'{s}' is not a metric; use cosine or euclidean")),
    }
}

pub fn parse_index(s: &str) -> Result<IndexKind, String> {
    match s {
        "exact" => Ok(IndexKind::Exact),
        "kdtree" => Ok(IndexKind::KdTree),
        _ => Err(format!(
            "'{s}' is not a neighbour index; use exact or kdtree"
        )),
    }
}
