//! `embloom assess`: read, assess, write the report folder, print the table.

use std::path::{Path, PathBuf};

use clap::Args;

use super::args::{
    ExternalArgs, InputArgs, MethodArgs, MethodEntry, flag_text, parse_method_entry, parse_size,
    split_methods,
};
use super::progress::{FoldBar, show_progress};
use super::protocol::ProtocolArgs;
use embloom::assess::{
    AssessConfig, AssessResults, ExternalConfig, FileRows, GrownFile, InputInfo, RowSets,
    assess_sets_observed, check_thin_classes, read_external,
};
use embloom::augment::MethodKind;
use embloom::error::Result;
use embloom::io::{self, ReadOptions};

/// Compare methods on k-NN and linear probes under stratified (or grouped, or given) k-fold
/// cross-validation: each augmenter is fitted on a fold's real training rows only, and
/// probes are scored on real held-out rows only. Differences against `none` are paired per
/// fold, with 95% intervals (see --interval). A file embloom grew is assessed on its real rows,
/// and its own synthetic rows are one more method, `<origin> (from file)`: in each fold only
/// those whose parent and partner are training rows of the fold are used. Input-space sets
/// (--external NAME=FILE) are methods too, gated the same way by each row's parent; a method
/// list entry joined by + (flips+interpolate) trains on the union of its parts' rows.
#[derive(Args, Debug)]
pub struct AssessArgs {
    #[command(flatten)]
    pub input: InputArgs,
    /// Methods to compare (none, the baseline, is always included); an entry joined by +
    /// (e.g. flips+interpolate) trains on the union of its parts, each made as it would be
    /// alone.
    #[arg(long, value_delimiter = ',', default_value = "none,interpolate,extrapolate,principal-noise", value_parser = parse_method_entry)]
    pub methods: Vec<MethodEntry>,
    #[command(flatten)]
    pub external: ExternalArgs,
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
    #[arg(long, value_name = "SIZE", value_parser = parse_size)]
    pub max_memory: Option<u64>,
}

/// Run `embloom assess` and print its table (or JSON).
pub fn run(a: AssessArgs, quiet: bool) -> anyhow::Result<()> {
    let (kinds, unions) = split_methods(&a.methods, &a.external.external)?;
    let config = a.protocol.config(kinds, &a.how, !a.no_diagnostics);
    let opts = AssessOptions {
        input: a.input.file.clone(),
        read: ReadOptions {
            max_memory: a.max_memory,
            ..a.input.read_options()
        },
        config,
        external: a.external.external.clone(),
        external_config: ExternalConfig {
            budget: a.external.external_budget,
            unions,
        },
        report: a.report.clone(),
        force: a.force,
        max_memory: a.max_memory,
    };
    let (results, announced) = execute_announced(&opts, show_progress(quiet))?;
    if a.json {
        println!("{}", serde_json::to_string_pretty(&results)?);
    } else {
        // Warnings already printed before the work are not repeated under the table.
        let mut shown = results.clone();
        shown.warnings.retain(|w| !announced.contains(w));
        print!("{}", embloom::report::terminal_table(&shown));
        if let Some(dir) = &a.report
            && !quiet
        {
            eprintln!("report written to {}", dir.display());
        }
    }
    Ok(())
}

#[derive(Debug, Clone)]
pub struct AssessOptions {
    pub input: PathBuf,
    pub read: ReadOptions,
    pub config: AssessConfig,
    /// External sets by name and file, read with the input's keys and a `parent` per row.
    pub external: Vec<(String, PathBuf)>,
    pub external_config: ExternalConfig,
    pub report: Option<PathBuf>,
    pub force: bool,
    /// Refuse when the estimated peak memory exceeds this many bytes (and always when it
    /// exceeds what the system has available).
    pub max_memory: Option<u64>,
}

/// Run an assessment and write its report folder when asked.
pub fn execute(opts: &AssessOptions, show_progress: bool) -> Result<AssessResults> {
    execute_announced(opts, show_progress).map(|(r, _)| r)
}

/// [`execute`], also giving the warnings printed on stderr before the fold loop started (they
/// stay in the results, so results.json and the report keep them).
pub fn execute_announced(
    opts: &AssessOptions,
    show_progress: bool,
) -> Result<(AssessResults, Vec<String>)> {
    let mut inputs = io::output_target::inputs_of(&opts.input, &opts.read);
    inputs.extend(opts.external.iter().map(|(_, p)| p.as_path()));
    if let Some(dir) = &opts.report {
        io::output_target::check_dir(dir, opts.force, &inputs)?;
    }
    let mut config = opts.config.clone().validated()?;
    let mut loaded = load(&opts.input, &opts.read)?;
    let file_notes = from_file_notes(&loaded.file);
    let (rows, sets) = with_external(&mut loaded, &opts.external, &opts.read)?;
    let ds = &loaded.file.real;
    // Checked again by the library; here so the warning comes before the work.
    let thin = check_thin_classes(ds, config.folds, &loaded.info.path)?.map(|w| flag_text(&w));
    let clamped = clamp_knn_k(&mut config, ds.n_rows());
    check_memory(ds, &config, &rows, opts)?;
    let announced: Vec<String> = thin.into_iter().collect();
    for w in &announced {
        eprintln!("warning: {w}");
    }
    let bar = FoldBar::new(show_progress);
    let results = assess_sets_observed(
        ds,
        &config,
        loaded.info.clone(),
        RowSets {
            rows: &rows,
            config: &opts.external_config,
            sets: &sets,
        },
        &mut |p| bar.update(p),
    );
    bar.finish();
    let mut results = results?;
    results.command_line = command_line();
    results.warnings.extend(loaded.file.left_out.clone());
    results.warnings.extend(file_notes);
    results.warnings.extend(loaded.notes.iter().cloned());
    results.warnings.extend(clamped);
    if loaded.dropped_nonfinite > 0 {
        results.warnings.push(format!(
            "{} input rows with NaN/Inf were skipped",
            loaded.dropped_nonfinite
        ));
    }
    // The library names parameters; the command line's reader knows them by their flags.
    results.warnings = results.warnings.iter().map(|w| flag_text(w)).collect();
    if let Some(dir) = &opts.report {
        embloom::report::write_report_dir_guarded(dir, &results, opts.force, &inputs)?;
    }
    Ok((results, announced))
}

/// The input as assess and sweep use it.
pub struct Input {
    /// The real rows (the data) and, for a grown file, its synthetic rows by origin.
    pub file: GrownFile,
    pub info: InputInfo,
    pub dropped_nonfinite: usize,
    /// How the file was read, where a user may want to know (an old key name accepted).
    pub notes: Vec<String>,
}

/// Read the input and describe it for the results (path, SHA-256, shape, classes).
///
/// A file embloom grew carries an `origin` per row: only its `real` rows are data, so its
/// synthetic rows can never be scored as if they were observations; they are kept apart
/// with their provenance, for assess to use as methods of their own.
pub fn load(path: &Path, read: &ReadOptions) -> Result<Input> {
    let io::Loaded {
        mut dataset,
        dropped_nonfinite,
        origin,
        parent,
        partner,
        notes,
        ..
    } = io::read(path, read)?;
    // Assess computes in f32 only; the input's f64 values would be copied into every fold.
    dataset.drop_stored_values();
    embloom::neighbors::magnitude::check(path, dataset.x.view())?;
    let file = GrownFile::split(
        path,
        dataset,
        origin.as_deref(),
        parent.as_deref(),
        partner.as_deref(),
    )?;
    let info = InputInfo::of(path, &file.real)?.with_labels_file(read.labels_file.as_deref())?;
    Ok(Input {
        file,
        info,
        dropped_nonfinite,
        notes,
    })
}

/// The grown file's rows (taken out of `loaded`) followed by each external set, read with the
/// input's keys and resolved against its real rows, and what results.json records of each.
pub fn with_external(
    loaded: &mut Input,
    external: &[(String, PathBuf)],
    read: &ReadOptions,
) -> Result<(Vec<FileRows>, Vec<embloom::assess::ExternalSetInfo>)> {
    let mut rows = std::mem::take(&mut loaded.file.methods);
    let mut sets = Vec::new();
    let read = ReadOptions {
        labels_file: None,
        ..read.clone()
    };
    for (name, path) in external {
        let (r, info) = read_external(name, path, &read, &loaded.file.real)?;
        rows.push(r);
        sets.push(info);
    }
    Ok((rows, sets))
}

/// What the report says about a grown file's rows: each origin is a method of its own, made
/// before the split, so the in-fold method is the leakage-free comparison.
fn from_file_notes(file: &GrownFile) -> Vec<String> {
    file.methods
        .iter()
        .map(|m| {
            format!(
                "the input is a grown file: its {} synthetic rows are assessed as '{}'; in each fold only those whose parent and partner are training rows are used, but they were made from all real rows before the split (their neighbours were chosen among rows a fold holds out), so an in-fold method is the leakage-free comparison",
                m.n_rows(),
                m.id()
            )
        })
        .collect()
}

/// The warning for a k-NN k the library lowered to a fold's training rows.
pub fn clamp_knn_k(config: &mut AssessConfig, rows: usize) -> Option<String> {
    config.clamp_knn_k(rows).map(|c| {
        format!(
            "--knn-k {} is more than the {} training rows of a fold; using k = {}",
            c.asked, c.train_rows, c.used
        )
    })
}

/// Refuses before the fold loop when one fold's work would not fit in memory.
fn check_memory(
    ds: &embloom::Dataset,
    config: &AssessConfig,
    file_rows: &[FileRows],
    opts: &AssessOptions,
) -> Result<()> {
    let plan = embloom::augment::plan_for(ds, config.target, config.classes.as_deref())?;
    let fitted = if config.methods.iter().any(|m| *m != MethodKind::None) {
        plan.total()
    } else {
        0
    };
    // A fold holds one method's rows at a time; the file's rows are held throughout.
    // A union holds its parts' rows at once: at most every method's.
    let from_file: usize = file_rows.iter().map(|m| m.n_rows()).sum();
    let largest_file = file_rows.iter().map(|m| m.n_rows()).max().unwrap_or(0);
    let unions = opts.external_config.unions.len();
    let synthetic = if unions > 0 {
        fitted * config.methods.len() + 2 * from_file
    } else {
        fitted.max(largest_file) + from_file
    };
    let mut est = embloom::memory::for_assess(
        &opts.input,
        ds.n_rows(),
        ds.dims(),
        synthetic,
        config.folds,
        config.probes.contains(&embloom::probe::ProbeKind::Linear),
        ds.float_type,
    );
    if config.probes.contains(&embloom::probe::ProbeKind::Knn) {
        let test = ds.n_rows() / config.folds.max(2);
        est = est.with_neighbour_search(
            test,
            ds.n_rows() - test,
            ds.dims(),
            config.knn.k,
            rayon::current_num_threads(),
        );
    }
    // Every method besides none fits a PCA per grown class for the report's scatter, and
    // principal-noise one per grown class in parallel; the largest grown class bounds them.
    let grown: Vec<usize> = plan
        .add
        .iter()
        .zip(ds.class_counts())
        .filter(|(add, _)| **add > 0)
        .map(|(_, count)| count)
        .collect();
    if fitted > 0
        && let Some(&largest) = grown.iter().max()
    {
        let workers = if config.methods.contains(&MethodKind::PrincipalNoise) {
            rayon::current_num_threads().min(grown.len())
        } else {
            1
        };
        est = est.with_pca(largest - largest / config.folds.max(2), ds.dims(), workers);
    }
    if config.methods.contains(&MethodKind::Calibrated) {
        let folds = config.folds.max(2);
        let lenders: Vec<usize> = plan
            .add
            .iter()
            .zip(ds.class_counts())
            .filter(|(add, _)| **add == 0)
            .map(|(_, count)| count - count / folds)
            .collect();
        est = est.with_lenders(&lenders, ds.dims(), rayon::current_num_threads());
    }
    if config.methods.contains(&MethodKind::Mix) {
        let n = ds.n_rows();
        est = est.with_partner_rows(n - n / config.folds.max(2), ds.dims());
    }
    let est = est.with_fold_records(
        config.repeats.max(1)
            * config.folds.max(2)
            * (config.methods.len() + file_rows.len() + unions)
            * config.probes.len(),
        ds.n_classes(),
    );
    embloom::memory::check(
        &est,
        opts.max_memory,
        &format!("assessing {}", opts.input.display()),
        "assess fewer classes (--classes A,B), a smaller --target (e.g. median), fewer folds (--folds 3) or repeats (--repeats), the knn probe alone (--probes knn), or raise --max-memory",
    )
}

/// This process's command line, each argument shell-quoted when it needs it.
pub fn command_line() -> String {
    std::env::args_os()
        .enumerate()
        .map(|(i, a)| {
            let a = if i == 0 {
                "embloom".to_string()
            } else {
                a.to_string_lossy().into_owned()
            };
            let plain = !a.is_empty()
                && a.chars()
                    .all(|c| c.is_ascii_alphanumeric() || "-_./=,:+@%".contains(c));
            if plain {
                a
            } else {
                format!("'{}'", a.replace('\'', "'\\''"))
            }
        })
        .collect::<Vec<_>>()
        .join(" ")
}
