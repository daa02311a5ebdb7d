//! Arguments shared by several commands: where the data is, how rows are made, and the
//! parsers that turn flag text into the library's typed values.

use std::path::PathBuf;

use clap::Args;

use embloom::assess::{ExternalBudget, MethodId};
use embloom::augment::{AugmentParams, MethodKind, PairPath, Param, Target, UnitNorm};
use embloom::io::ReadOptions;
use embloom::neighbors::{IndexKind, Metric};

/// Where the data is and which keys hold it.
#[derive(Args, Debug, Clone)]
pub struct InputArgs {
    /// Embedding file: .npy, .npz, .csv, .tsv, .safetensors, .h5/.hdf5 (with the hdf5 feature),
    /// .parquet, .arrow/.feather (with the columnar feature).
    pub file: PathBuf,
    /// Labels for a .npy embedding file (a second .npy).
    #[arg(long, value_name = "FILE")]
    pub labels: Option<PathBuf>,
    /// npz member, safetensors tensor, HDF5 dataset path or Parquet/Arrow list column of the
    /// embeddings.
    #[arg(long, default_value = "embeddings", value_name = "KEY")]
    pub embeddings_key: String,
    /// npz member, safetensors tensor or HDF5 dataset path of the labels.
    #[arg(long, default_value = "labels", value_name = "KEY")]
    pub labels_key: String,
    /// CSV/TSV/Parquet/Arrow column holding the labels.
    #[arg(long, default_value = "label", value_name = "NAME")]
    pub label_column: String,
    /// Member or column holding a fold assignment (used by assess when present).
    #[arg(long, default_value = "fold", value_name = "NAME")]
    pub fold_key: String,
    /// Table column holding row ids (default: `id`, or the older `ids`, when present).
    #[arg(long, value_name = "NAME")]
    pub id_column: Option<String>,
    /// Table column holding groups (default: `group`, or the older `groups`, when present).
    #[arg(long, value_name = "NAME")]
    pub group_column: Option<String>,
    /// Table column holding a fold assignment (default: the --fold-key column when present).
    #[arg(long, value_name = "NAME")]
    pub fold_column: Option<String>,
    /// CSV/TSV columns to read past (free text, say): not features; kept in a CSV output.
    #[arg(long, value_name = "A,B", value_delimiter = ',', action = clap::ArgAction::Append)]
    pub ignore_columns: Vec<String>,
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
            id_column: self.id_column.clone(),
            group_column: self.group_column.clone(),
            fold_column: self.fold_column.clone(),
            ignore_columns: self.ignore_columns.clone(),
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
    #[arg(long, default_value = "chord", value_parser = parse_path,
          help = param_help(Param::Path, "Path from a row to its neighbour: chord (the straight segment), or sphere (the great circle, Shoemake 1985; needs unit-norm rows or --unit-norm on)"))]
    pub path: PairPath,
    #[arg(long, default_value_t = AugmentParams::default().borrowed_classes, value_name = "K",
          help = param_help(Param::BorrowedClasses, "Classes (not grown, 2 or more rows) whose mean and covariance calibrated borrows for each base row"))]
    pub borrowed_classes: usize,
    #[arg(long, default_value = "off", value_name = "off|L", value_parser = parse_tukey,
          help = param_help(Param::Tukey, "Tukey's ladder of powers x^L before calibrating (the paper's L is 0.5), for non-negative features only; off leaves features as they are"))]
    pub tukey: TukeySetting,
    #[arg(long, default_value_t = AugmentParams::default().danger_neighbours, value_name = "M",
          help = param_help(Param::DangerNeighbours, "Nearest training rows (all classes) that judge whether a row is near the class boundary: it is when at least half but not all of them are of other classes (the paper's m)"))]
    pub danger_neighbours: usize,
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
            path: self.path,
            borrowed_classes: self.borrowed_classes,
            tukey: self.tukey.0,
            danger_neighbours: self.danger_neighbours,
        }
    }
}

/// Input-space sets to compare with the feature-space methods (shared by assess and sweep).
#[derive(Args, Debug, Clone, Default)]
pub struct ExternalArgs {
    /// An external set: FILE holds embeddings of input-space augmented samples made with your
    /// own backbone, with `labels` (or --labels-key / --label-column) and `parent` (the real
    /// row each came from: the real file's `id`, or its row index when it has no ids). It is
    /// assessed as a method named NAME; in each fold only rows whose parent is a training row
    /// are used. Repeatable.
    #[arg(long = "external", value_name = "NAME=FILE", value_parser = parse_external)]
    pub external: Vec<(String, PathBuf)>,
    /// How many of an external set's eligible rows a fold uses: match (per grown class, as
    /// many as the feature-space methods add under --target, drawn at random), all, or N (at
    /// most N per class).
    #[arg(long, default_value = "match", value_name = "match|all|N", value_parser = parse_budget)]
    pub external_budget: ExternalBudget,
}

/// One entry of a method list: a method embloom runs, or a name resolved once the external
/// sets are known (an external set's, or a union joined by `+`).
#[derive(Debug, Clone, PartialEq)]
pub enum MethodEntry {
    Kind(MethodKind),
    Named(MethodId),
}

/// The methods of a list, the unions among them, and the names of external sets it names
/// alone; refuses a name that is neither a method nor one of `external`.
pub fn split_methods(
    entries: &[MethodEntry],
    external: &[(String, PathBuf)],
) -> Result<(Vec<MethodKind>, Vec<MethodId>), embloom::Error> {
    let known = |n: &str| external.iter().any(|(e, _)| e == n);
    let mut kinds = Vec::new();
    let mut unions = Vec::new();
    for e in entries {
        match e {
            MethodEntry::Kind(k) => kinds.push(*k),
            MethodEntry::Named(MethodId::External(n)) if known(n) => {}
            MethodEntry::Named(MethodId::External(n)) => {
                return Err(n.parse::<MethodKind>().map_or_else(
                    |e| e,
                    |_| embloom::Error::param("methods", n, "report this as a bug"),
                ));
            }
            MethodEntry::Named(u @ MethodId::Union(parts)) => {
                for p in parts {
                    match p {
                        MethodId::Kind(k) if !kinds.contains(k) => kinds.push(*k),
                        MethodId::External(n) if !known(n) => {
                            return Err(embloom::Error::param(
                                "methods",
                                format!(
                                    "{u} joins '{n}', which is neither a method nor an external set"
                                ),
                                "give the external set with --external NAME=FILE, or join methods by their names",
                            ));
                        }
                        _ => {}
                    }
                }
                if !unions.contains(u) {
                    unions.push(u.clone());
                }
            }
            MethodEntry::Named(other) => unions.push(other.clone()),
        }
    }
    Ok((kinds, unions))
}

pub fn parse_method_entry(s: &str) -> Result<MethodEntry, String> {
    if s.contains(embloom::assess::UNION_JOIN) {
        let id: MethodId = s.parse().map_err(|e: embloom::Error| error_text(&e))?;
        let parts = match &id {
            MethodId::Union(parts) => parts.as_slice(),
            _ => &[],
        };
        if parts.len() < 2 || parts.iter().any(|p| p.name().is_empty() || p.is_baseline()) {
            return Err(format!(
                "'{s}' is not a union: join two or more methods or external sets (not none) with +, e.g. flips+interpolate"
            ));
        }
        return Ok(MethodEntry::Named(id));
    }
    match s.parse::<MethodKind>() {
        Ok(k) => Ok(MethodEntry::Kind(k)),
        Err(_) if embloom::assess::check_external_name(s).is_ok() => {
            Ok(MethodEntry::Named(MethodId::External(s.to_string())))
        }
        Err(e) => Err(error_text(&e)),
    }
}

pub fn parse_external(s: &str) -> Result<(String, PathBuf), String> {
    let Some((name, file)) = s.split_once('=') else {
        return Err(format!(
            "'{s}' is not NAME=FILE; give the set's name and its file, e.g. flips=flips.npz"
        ));
    };
    embloom::assess::check_external_name(name).map_err(|e| error_text(&e))?;
    if file.is_empty() {
        return Err(format!("'{s}' names no file; give NAME=FILE"));
    }
    Ok((name.to_string(), PathBuf::from(file)))
}

pub fn parse_budget(s: &str) -> Result<ExternalBudget, String> {
    s.parse().map_err(|e: embloom::Error| error_text(&e))
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
    ("path", "--path", ""),
    ("borrowed-classes", "--borrowed-classes", ""),
    ("tukey", "--tukey", ""),
    ("danger-neighbours", "--danger-neighbours", ""),
    ("unit-norm", "--unit-norm", ""),
    ("probes", "--probes", ""),
    ("folds", "--folds", ""),
    ("repeats", "--repeats", ""),
    ("max-memory", "--max-memory", ""),
    ("k", "--knn-k", ""),
    ("temperature", "--knn-temperature", ""),
    ("knn-standardize", "--knn-standardize", ""),
    ("l2", "--linear-l2", ""),
    ("max_iter", "--linear-max-iter", ""),
    ("methods", "--methods", ""),
    ("external", "--external", ""),
    ("external-budget", "--external-budget", ""),
    ("method", "--method", ""),
    ("knob", "--knob", ""),
    ("values", "--values", ""),
    ("force", "--force", ""),
    ("labels_file", "--labels FILE", ""),
    ("embeddings_key", "--embeddings-key", ""),
    ("labels_key", "--labels-key", ""),
    ("label_column", "--label-column", ""),
    ("drop_nonfinite", "--drop-nonfinite", ""),
    ("ignore_columns", "--ignore-columns", ""),
    ("id_column", "--id-column", ""),
    ("group_column", "--group-column", ""),
    ("fold_column", "--fold-column", ""),
];

/// `text` with every parameter the library wrote in backticks (`` `max_iter` ``, `` `force` ``)
/// spelled as the flag that sets it, for a warning or fix the binary prints.
pub fn flag_text(text: &str) -> String {
    FLAGS.iter().fold(text.to_string(), |t, (name, flag, _)| {
        t.replace(&format!("`{name}`"), flag)
    })
}

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
            flag_text(&format!("invalid {flag}: {detail}\n  fix: {fix}"))
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
        } => flag_text(&format!(
            "{what} would need about {needed} of {resource}, more than --max-memory ({})\n  fix: {fix}",
            embloom::memory::human(*bytes)
        )),
        other => flag_text(&other.to_string()),
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
pub fn parse_path(s: &str) -> Result<PairPath, String> {
    s.parse().map_err(|e: embloom::Error| error_text(&e))
}
/// `--tukey`: off or a power. A type of its own, because clap reads an `Option` field as
/// "flag absent or present", not as a value that may be off.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TukeySetting(pub Option<f64>);

pub fn parse_tukey(s: &str) -> Result<TukeySetting, String> {
    embloom::augment::parse_tukey(s)
        .map(TukeySetting)
        .map_err(|e| error_text(&e))
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
