//! Atomic replacement of an output file: write a temporary file in the target's own folder
//! (so the final rename never crosses a file system), fsync it, then rename it into place.
//! A crash or an error leaves either the old file or the new one, never half a file, and the
//! temporary file is removed on every error path.

use std::fs::{self, File, OpenOptions};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

use crate::error::{Error, Result};

static COUNTER: AtomicU64 = AtomicU64::new(0);

/// Removes the temporary file unless disarmed.
struct TempGuard(Option<PathBuf>);

impl Drop for TempGuard {
    fn drop(&mut self) {
        if let Some(p) = self.0.take() {
            let _ = fs::remove_file(p);
        }
    }
}

/// Refuses an existing target unless `force`, and a target that is a folder.
pub fn check_target(path: &Path, force: bool) -> Result<()> {
    match fs::symlink_metadata(path) {
        Ok(m) if m.is_dir() => Err(Error::output(
            path,
            "is a folder",
            "give a file name for the output",
        )),
        Ok(_) if !force => Err(Error::output(
            path,
            "already exists; refusing to overwrite it",
            "pass --force to replace it, or choose another name",
        )),
        _ => Ok(()),
    }
}

/// Runs `fill` on a fresh temporary path beside `path`, then moves the result into place.
pub fn write_with(path: &Path, force: bool, fill: impl FnOnce(&Path) -> Result<()>) -> Result<()> {
    check_target(path, force)?;
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    if !dir.is_dir() {
        return Err(Error::output(
            path,
            format!("folder {} does not exist", dir.display()),
            "create the folder first",
        ));
    }
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "out".into());
    let tmp = dir.join(format!(
        ".{name}.{}-{}.tmp",
        std::process::id(),
        COUNTER.fetch_add(1, Ordering::Relaxed)
    ));
    // create_new: never clobber a file that happens to have the temporary name.
    OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&tmp)
        .map_err(|e| Error::io(&tmp, e))?;
    let mut guard = TempGuard(Some(tmp.clone()));
    fill(&tmp)?;
    File::open(&tmp)
        .and_then(|f| f.sync_all())
        .map_err(|e| Error::io(&tmp, e))?;
    // Re-check: the target may have appeared while we were writing.
    check_target(path, force)?;
    fs::rename(&tmp, path).map_err(|e| Error::io(path, e))?;
    guard.0 = None;
    // Persist the rename itself; not every platform can open a folder, so this is best effort.
    if let Ok(d) = File::open(&dir) {
        let _ = d.sync_all();
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn refuses_existing_and_cleans_up() {
        // common practice, no source: no-clobber by default, nothing left behind on failure.
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("a.bin");
        write_with(&out, false, |t| {
            fs::write(t, b"one").map_err(|e| Error::io(t, e))
        })
        .unwrap();
        let err = write_with(&out, false, |t| {
            fs::write(t, b"two").map_err(|e| Error::io(t, e))
        })
        .unwrap_err();
        assert!(err.to_string().contains("--force"), "{err}");
        assert_eq!(fs::read(&out).unwrap(), b"one");
        let err = write_with(&out, true, |_| Err(Error::data("boom", "none"))).unwrap_err();
        assert!(err.to_string().contains("boom"));
        assert_eq!(fs::read(&out).unwrap(), b"one");
        assert_eq!(fs::read_dir(dir.path()).unwrap().count(), 1);
        write_with(&out, true, |t| {
            fs::write(t, b"two").map_err(|e| Error::io(t, e))
        })
        .unwrap();
        assert_eq!(fs::read(&out).unwrap(), b"two");
    }
}
