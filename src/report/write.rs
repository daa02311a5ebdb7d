//! Writing a report folder: everything is rendered in memory first (a rendering failure then
//! leaves nothing behind), and the folder is written through the one atomic-output path in
//! `io` (temporary folder, manifest, no-replace rename or atomic exchange).

use std::io::Write as _;
use std::path::Path;

use crate::assess::results::AssessResults;
use crate::error::{Error, Result};

use super::{
    confusion_changes_csv, diagnostics_csv, folds_csv, html_report, per_class_csv, summary_csv,
};

/// Write `results.json`, `summary.csv`, `per_class.csv`, `confusion_changes.csv`,
/// `diagnostics.csv`, `folds.csv` and `report.html` into the folder `dir`.
///
/// If `dir` exists it is refused unless `force` is set, and even then unless it is a report
/// folder embloom wrote holding none of `inputs`; at every moment `dir` is either the old
/// report or the new one. In `results.json`, figures that are NaN are written as `null`
/// (serde_json's rule for non-finite floats).
pub fn write_report_dir(dir: &Path, r: &AssessResults, force: bool) -> Result<()> {
    let input = std::path::PathBuf::from(&r.input.path);
    write_report_dir_guarded(dir, r, force, &[&input])
}

/// [`write_report_dir`] with the input files to protect named explicitly.
pub fn write_report_dir_guarded(
    dir: &Path,
    r: &AssessResults,
    force: bool,
    inputs: &[&Path],
) -> Result<()> {
    let json = serde_json::to_string_pretty(r).map_err(|e| {
        Error::output(
            dir,
            format!("could not serialise the results: {e}"),
            "report this as a bug",
        )
    })?;
    let files: [(&str, String); 7] = [
        ("results.json", json + "\n"),
        ("summary.csv", summary_csv(r)),
        ("per_class.csv", per_class_csv(r)),
        ("confusion_changes.csv", confusion_changes_csv(r)),
        ("diagnostics.csv", diagnostics_csv(r)),
        ("folds.csv", folds_csv(r)),
        ("report.html", html_report(r)),
    ];
    crate::io::write_dir_atomically(dir, force, "report", inputs, |tmp| {
        for (file, content) in &files {
            write_synced(&tmp.join(file), content.as_bytes())?;
        }
        Ok(files.iter().map(|(f, _)| f.to_string()).collect())
    })
}

/// Create a file, write it and flush it to disk before the folder is moved into place.
fn write_synced(path: &Path, bytes: &[u8]) -> Result<()> {
    let mut f = std::fs::File::create(path).map_err(|e| Error::io(path, e))?;
    f.write_all(bytes).map_err(|e| Error::io(path, e))?;
    f.sync_all().map_err(|e| Error::io(path, e))
}
