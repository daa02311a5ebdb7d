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
    if let Some(dir) = &opts.report
        && dir.exists()
        && !opts.force
    {
        return Err(Error::output(
            dir,
            "already exists",
            "pass --force to replace it, or choose another folder",
        ));
    }
    let config = opts.config.clone().validated()?;
    let (loaded, input) = load(&opts.input, &opts.read)?;
    let ds = &loaded.dataset;
    check_memory(ds, &config, opts)?;
    let mut results = assess(ds, &config, input)?;
    if let Some(origin) = &loaded.origin {
        let synthetic = origin.iter().filter(|o| *o != "real").count();
        if synthetic > 0 {
            results.warnings.push(format!(
                "the input is a grown file: its {synthetic} synthetic rows were left out and only its real rows assessed"
            ));
        }
    }
    if loaded.dropped_nonfinite > 0 {
        results.warnings.push(format!(
            "{} input rows with NaN/Inf were skipped",
            loaded.dropped_nonfinite
        ));
    }
    if let Some(dir) = &opts.report {
        crate::report::write_report_dir(dir, &results, opts.force)?;
    }
    Ok(results)
}

/// Read the input and describe it for the results (path, SHA-256, shape, classes).
///
/// A file embloom grew carries an `origin` per row: only its `real` rows are data, so its
/// synthetic rows can never be scored as if they were observations.
pub fn load(path: &Path, read: &ReadOptions) -> Result<(Loaded, InputInfo)> {
    let mut loaded = io::read(path, read)?;
    if let Some(origin) = &loaded.origin {
        let real: Vec<usize> = (0..origin.len()).filter(|&i| origin[i] == "real").collect();
        if real.len() < origin.len() {
            loaded.dataset = loaded.dataset.select(&real);
        }
    }
    let ds = &loaded.dataset;
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
