//! `embloom assess`: read, assess, and write the report folder.

use std::io::Read;
use std::path::{Path, PathBuf};

use sha2::{Digest, Sha256};

use crate::assess::{AssessConfig, AssessResults, InputInfo, assess};
use crate::error::{Error, Result};
use crate::io::{self, Loaded, ReadOptions};

#[derive(Debug, Clone)]
pub struct AssessOptions {
    pub input: PathBuf,
    pub read: ReadOptions,
    pub config: AssessConfig,
    pub report: Option<PathBuf>,
    pub force: bool,
    /// Refuse when the estimated peak memory exceeds this many bytes (and always when it
    /// exceeds what the system has available).
    pub max_memory: Option<u64>,
}

/// Run an assessment and write its report folder when asked.
pub fn run(opts: &AssessOptions) -> Result<AssessResults> {
    let inputs = io::output_target::inputs_of(&opts.input, &opts.read);
    if let Some(dir) = &opts.report {
        io::output_target::check_dir(dir, opts.force, &inputs)?;
    }
    let mut config = opts.config.clone().validated()?;
    let (loaded, input) = load(&opts.input, &opts.read)?;
    let ds = &loaded.dataset;
    let clamped = clamp_knn_k(&mut config, ds.n_rows());
    check_memory(ds, &config, opts)?;
    let mut results = assess(ds, &config, input)?;
    results.warnings.extend(clamped);
    results
        .warnings
        .extend(thin_class_warning(ds, config.folds));
    if loaded.dropped_nonfinite > 0 {
        results.warnings.push(format!(
            "{} input rows with NaN/Inf were skipped",
            loaded.dropped_nonfinite
        ));
    }
    if let Some(dir) = &opts.report {
        crate::report::write_report_dir_guarded(dir, &results, opts.force, &inputs)?;
    }
    Ok(results)
}

/// Read the input and describe it for the results (path, SHA-256, shape, classes).
pub fn load(path: &Path, read: &ReadOptions) -> Result<(Loaded, InputInfo)> {
    let loaded = io::read(path, read)?;
    let ds = &loaded.dataset;
    crate::neighbors::magnitude::check(path, ds.x.view())?;
    let input = InputInfo {
        path: path.display().to_string(),
        sha256: sha256_of(path)?,
        rows: ds.n_rows(),
        dims: ds.dims(),
        classes: ds.classes.clone(),
        class_counts: ds.class_counts(),
    };
    Ok((loaded, input))
}

/// Clamps the k-NN probe's k to the training rows of a fold (more neighbours than rows is
/// meaningless, and a huge k would size buffers by it), saying so.
pub fn clamp_knn_k(config: &mut AssessConfig, rows: usize) -> Option<String> {
    let train = rows - rows / config.folds.max(2);
    if config.knn.k <= train.max(1) {
        return None;
    }
    let asked = config.knn.k;
    config.knn.k = train.max(1);
    Some(format!(
        "--knn-k {asked} is more than the {} training rows of a fold; using k = {}",
        train, config.knn.k
    ))
}

/// A warning, with a short list, when classes have fewer rows (or groups) than folds: such a
/// class is missing from some test folds and some training folds, so its recall is near zero
/// whatever the method, and many such classes drag every balanced figure toward 0.
pub fn thin_class_warning(ds: &crate::Dataset, folds: usize) -> Option<String> {
    let thin = crate::eval::thin_classes(ds, folds);
    if thin.is_empty() {
        return None;
    }
    let shown: Vec<String> = thin
        .iter()
        .take(5)
        .map(|&c| crate::report::display_name(&ds.classes[c as usize], 40))
        .collect();
    let more = if thin.len() > 5 {
        format!(" and {} more", thin.len() - 5)
    } else {
        String::new()
    };
    Some(format!(
        "{} of {} classes have fewer rows than the {folds} folds ({}{more}): they cannot be in every fold, so their recall says little; merge or drop rare classes, or use fewer folds (--folds)",
        thin.len(),
        ds.n_classes(),
        shown.join(", ")
    ))
}

/// Refuses before the fold loop when one fold's work would not fit in memory.
fn check_memory(ds: &crate::Dataset, config: &AssessConfig, opts: &AssessOptions) -> Result<()> {
    let plan = super::options::plan_for(ds, config.target, config.classes.as_deref())?;
    let synthetic = if config
        .methods
        .iter()
        .any(|m| *m != crate::augment::MethodKind::None)
    {
        plan.total()
    } else {
        0
    };
    let est = crate::memory::for_assess(
        &opts.input,
        ds.n_rows(),
        ds.dims(),
        synthetic,
        config.folds,
        config.probes.contains(&crate::probe::ProbeKind::Linear),
    );
    crate::memory::check(
        &est,
        opts.max_memory,
        &format!("assessing {}", opts.input.display()),
        "assess fewer classes (--classes A,B), a smaller --target (e.g. median), fewer folds (--folds 3), the knn probe alone (--probes knn), or raise --max-memory",
    )
}

/// Hex SHA-256 of a file, so a report names exactly the data it was computed on.
pub fn sha256_of(path: &Path) -> Result<String> {
    let mut file = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
    let mut hasher = Sha256::new();
    let mut buf = vec![0u8; 1 << 20];
    loop {
        let n = file.read(&mut buf).map_err(|e| Error::io(path, e))?;
        if n == 0 {
            break;
        }
        hasher.update(&buf[..n]);
    }
    Ok(hasher
        .finalize()
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect())
}
