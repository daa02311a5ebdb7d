//! Writing a report folder. The folder appears complete or not at all: everything is rendered
//! in memory, written into a hidden temporary folder beside the target (same parent, so the
//! final step is a rename on one file system), and only then renamed into place. A failure
//! at any step removes the temporary folder, so no half-written report is ever left under the
//! target name.

use std::fs;
use std::io::Write as _;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

use crate::assess::results::AssessResults;
use crate::error::{Error, Result};

use super::{diagnostics_csv, folds_csv, html_report, per_class_csv, summary_csv};

/// Distinguishes temporary folders of several writes in one process.
static SEQUENCE: AtomicU64 = AtomicU64::new(0);

/// Write `results.json`, `summary.csv`, `per_class.csv`, `diagnostics.csv`, `folds.csv` and
/// `report.html` into the folder `dir`.
///
/// If `dir` exists it is refused unless `force` is set; with `force` the old folder is moved
/// aside, the new one renamed in, and only then the old one removed, so at every moment `dir`
/// is either the old report or the new one. In `results.json`, figures that are NaN are
/// written as `null` (serde_json's rule for non-finite floats).
pub fn write_report_dir(dir: &Path, r: &AssessResults, force: bool) -> Result<()> {
    let name = dir
        .file_name()
        .and_then(|n| n.to_str())
        .filter(|n| !n.is_empty())
        .ok_or_else(|| {
            Error::output(
                dir,
                "the report folder needs a plain name as its last component",
                "name a folder, e.g. reports/run1",
            )
        })?
        .to_string();
    let parent = match dir.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };

    let exists = fs::symlink_metadata(dir).is_ok();
    if exists && !force {
        return Err(Error::output(
            dir,
            "the report folder already exists",
            "pass --force or choose another folder",
        ));
    }
    if exists && !dir.is_dir() {
        return Err(Error::output(
            dir,
            "exists and is not a folder, so it is not replaced even with --force",
            "remove it or choose another folder",
        ));
    }

    // Render before touching the disk: a rendering failure then leaves nothing behind.
    let json = serde_json::to_string_pretty(r).map_err(|e| {
        Error::output(
            dir,
            format!("could not serialise the results: {e}"),
            "report this as a bug",
        )
    })?;
    let files: [(&str, String); 6] = [
        ("results.json", json + "\n"),
        ("summary.csv", summary_csv(r)),
        ("per_class.csv", per_class_csv(r)),
        ("diagnostics.csv", diagnostics_csv(r)),
        ("folds.csv", folds_csv(r)),
        ("report.html", html_report(r)),
    ];

    fs::create_dir_all(&parent).map_err(|e| Error::io(&parent, e))?;
    let tag = format!(
        "{}-{}",
        std::process::id(),
        SEQUENCE.fetch_add(1, Ordering::Relaxed)
    );
    let temp = TempDir::create(parent.join(format!(".{name}.tmp-{tag}")))?;
    for (file, content) in &files {
        write_synced(&temp.path.join(file), content.as_bytes())?;
    }

    if !exists {
        fs::rename(&temp.path, dir).map_err(|e| Error::io(dir, e))?;
        temp.disarm();
        return Ok(());
    }

    let old = parent.join(format!(".{name}.old-{tag}"));
    fs::rename(dir, &old).map_err(|e| Error::io(dir, e))?;
    if let Err(e) = fs::rename(&temp.path, dir) {
        // Put the old report back so the user loses nothing.
        let _ = fs::rename(&old, dir);
        return Err(Error::io(dir, e));
    }
    temp.disarm();
    fs::remove_dir_all(&old).map_err(|e| {
        Error::output(
            &old,
            format!("the new report is in place, but the old one could not be removed: {e}"),
            "remove this folder by hand",
        )
    })
}

/// Create a file, write it and flush it to disk before the folder is renamed into place.
fn write_synced(path: &Path, bytes: &[u8]) -> Result<()> {
    let mut f = fs::File::create(path).map_err(|e| Error::io(path, e))?;
    f.write_all(bytes).map_err(|e| Error::io(path, e))?;
    f.sync_all().map_err(|e| Error::io(path, e))
}

/// A temporary folder removed on drop unless disarmed (after it was renamed into place).
struct TempDir {
    path: PathBuf,
    armed: bool,
}

impl TempDir {
    fn create(path: PathBuf) -> Result<Self> {
        // A leftover of an earlier crashed run with the same process id is ours to clear.
        if path.exists() {
            fs::remove_dir_all(&path).map_err(|e| Error::io(&path, e))?;
        }
        fs::create_dir(&path).map_err(|e| Error::io(&path, e))?;
        Ok(TempDir { path, armed: true })
    }

    fn disarm(mut self) {
        self.armed = false;
    }
}

impl Drop for TempDir {
    fn drop(&mut self) {
        if self.armed {
            let _ = fs::remove_dir_all(&self.path);
        }
    }
}
