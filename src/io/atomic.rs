//! The one atomic-output implementation, for files and for folders. Everything is written
//! into a hidden temporary beside the target (same folder, so the final step is a rename on
//! one file system), flushed to disk, and only then moved into place:
//!
//! - a new target is moved in with a no-replace rename, so a file or folder that appeared at
//!   the target after the last check is never overwritten;
//! - with `force`, a file is renamed over the old one and a folder is swapped with the old one
//!   in one step (`RENAME_EXCHANGE`), so the target is the old output or the new one at every
//!   moment; the replaced output's permission bits are kept;
//! - every temporary is registered (see [`super::temporaries`]) so a signal handler can remove
//!   it, and it is removed on every error path.
//!
//! Where the file system cannot exchange two names, a folder is replaced by two renames (old
//! aside to a hidden `.NAME.old-*`, new in); an interruption between them leaves the old
//! report in that hidden folder.

use std::fs::{self, File};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

use super::output_target::{self, parent_of};
use super::rename::{exchange, rename_noreplace};
use super::temporaries::Temporary;
use crate::error::{Error, Result};

static SEQUENCE: AtomicU64 = AtomicU64::new(0);

/// Refuses an existing target unless `force`, and a target that is a folder.
pub fn check_target(path: &Path, force: bool) -> Result<()> {
    output_target::check_file(path, force, &[], None)
}

/// Runs `fill` on a fresh temporary path beside `path`, then moves the result into place.
pub fn write_with(path: &Path, force: bool, fill: impl FnOnce(&Path) -> Result<()>) -> Result<()> {
    check_target(path, force)?;
    let dir = parent_of(path);
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "out".into());
    let file = {
        #[cfg(unix)]
        use std::os::unix::fs::PermissionsExt;
        let prefix = format!(".{name}.");
        let mut b = tempfile::Builder::new();
        b.prefix(&prefix).suffix(".tmp");
        // The usual mode of a new file (the umask still applies), not tempfile's private 600.
        #[cfg(unix)]
        b.permissions(fs::Permissions::from_mode(0o666));
        b.tempfile_in(&dir).map_err(|e| {
            Error::output(
                path,
                format!(
                    "cannot create a temporary file in {}: {}",
                    dir.display(),
                    output_target::os_reason(&e)
                ),
                "check the folder exists, is writable and has free space",
            )
        })?
    };
    let temp_path = file.into_temp_path();
    let tmp: PathBuf = temp_path.to_path_buf();
    let guard = Temporary::register(tmp.clone());
    fill(&tmp).map_err(|e| name_target(e, &tmp, path))?;
    File::open(&tmp)
        .and_then(|f| f.sync_all())
        .map_err(|e| name_target(Error::io(&tmp, e), &tmp, path))?;
    if force {
        if let Ok(old) = fs::metadata(path)
            && old.is_file()
        {
            let _ = fs::set_permissions(&tmp, old.permissions());
        }
        fs::rename(&tmp, path).map_err(|e| Error::io(path, e))?;
    } else {
        rename_noreplace(&tmp, path).map_err(|e| {
            if e.kind() == std::io::ErrorKind::AlreadyExists {
                Error::output(
                    path,
                    "appeared while embloom was writing; it was left untouched",
                    "pass `force` to replace it, or choose another name",
                )
            } else {
                Error::io(path, e)
            }
        })?;
    }
    guard.keep();
    let _ = temp_path.keep();
    sync_dir(&dir);
    Ok(())
}

/// Builds a folder of `kind` at `dir`: `fill` writes its files into a temporary folder and
/// returns their names, a manifest listing them is added, and the folder is moved into
/// place. An existing `dir` is replaced only with `force` and only when it is embloom's own
/// and holds none of `inputs`.
pub fn write_dir_with(
    dir: &Path,
    force: bool,
    kind: &str,
    inputs: &[&Path],
    fill: impl FnOnce(&Path) -> Result<Vec<String>>,
) -> Result<()> {
    let name = dir
        .file_name()
        .and_then(|n| n.to_str())
        .filter(|n| !n.is_empty())
        .ok_or_else(|| {
            Error::output(
                dir,
                "the folder needs a plain name as its last component",
                "name a folder, e.g. reports/run1",
            )
        })?
        .to_string();
    output_target::check_dir(dir, force, inputs)?;
    let parent = parent_of(dir);
    fs::create_dir_all(&parent).map_err(|e| Error::io(&parent, e))?;
    let tag = format!(
        "{}-{}",
        std::process::id(),
        SEQUENCE.fetch_add(1, Ordering::Relaxed)
    );
    let tmp = parent.join(format!(".{name}.tmp-{tag}"));
    if tmp.exists() {
        // A leftover of an earlier killed run with the same process id is ours to clear.
        fs::remove_dir_all(&tmp).map_err(|e| Error::io(&tmp, e))?;
    }
    fs::create_dir(&tmp).map_err(|e| Error::io(&tmp, e))?;
    let guard = Temporary::register(tmp.clone());
    let files = fill(&tmp).map_err(|e| name_target(e, &tmp, dir))?;
    output_target::write_manifest(&tmp, kind, &files)?;
    sync_dir(&tmp);

    match fs::symlink_metadata(dir) {
        Err(_) => {
            rename_noreplace(&tmp, dir).map_err(|e| {
                if e.kind() == std::io::ErrorKind::AlreadyExists {
                    Error::output(
                        dir,
                        "appeared while embloom was writing; it was left untouched",
                        "pass `force` to replace it, or choose another folder",
                    )
                } else {
                    Error::io(dir, e)
                }
            })?;
            guard.keep();
        }
        Ok(old) => {
            // Appeared meanwhile, or replaced on purpose: the same checks as at the start.
            output_target::check_dir(dir, force, inputs)?;
            let _ = fs::set_permissions(&tmp, old.permissions());
            if exchange(&tmp, dir).map_err(|e| Error::io(dir, e))? {
                // `tmp` now holds the old folder; dropping the guard removes it.
                drop(guard);
            } else {
                let old_aside = parent.join(format!(".{name}.old-{tag}"));
                fs::rename(dir, &old_aside).map_err(|e| Error::io(dir, e))?;
                if let Err(e) = fs::rename(&tmp, dir) {
                    let _ = fs::rename(&old_aside, dir);
                    return Err(Error::io(dir, e));
                }
                guard.keep();
                drop(Temporary::register(old_aside));
            }
        }
    }
    sync_dir(&parent);
    Ok(())
}

/// Errors about the hidden temporary are reported against the target the user named.
fn name_target(e: Error, tmp: &Path, target: &Path) -> Error {
    match e {
        Error::Io { path, source } if path.starts_with(tmp) => Error::output(
            target,
            format!(
                "could not be written: {}",
                output_target::os_reason(&source)
            ),
            fix_for(&source),
        ),
        Error::Output { path, detail, fix } if path.starts_with(tmp) => {
            Error::output(target, detail, fix)
        }
        other => other,
    }
}

fn fix_for(e: &std::io::Error) -> &'static str {
    match e.raw_os_error() {
        #[cfg(unix)]
        Some(libc::ENOSPC) | Some(libc::EDQUOT) => {
            "free some space or write to another disk; the old output, if any, is untouched"
        }
        #[cfg(unix)]
        Some(libc::EACCES) | Some(libc::EPERM) | Some(libc::EROFS) => {
            "choose a folder you can write to"
        }
        _ => {
            "check the disk and the folder, then run again; nothing was left under the target name"
        }
    }
}

/// Persist a rename; not every platform can open a folder, so this is best effort.
fn sync_dir(dir: &Path) {
    if let Ok(d) = File::open(dir) {
        let _ = d.sync_all();
    }
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
        assert!(err.to_string().contains("`force`"), "{err}");
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

    #[test]
    fn a_target_appearing_mid_write_is_kept() {
        // common practice, no source: a no-replace rename never overwrites.
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("a.bin");
        let err = write_with(&out, false, |t| {
            fs::write(&out, b"theirs").unwrap();
            fs::write(t, b"ours").map_err(|e| Error::io(t, e))
        })
        .unwrap_err();
        assert!(err.to_string().contains("appeared"), "{err}");
        assert_eq!(fs::read(&out).unwrap(), b"theirs");
        assert_eq!(fs::read_dir(dir.path()).unwrap().count(), 1);
    }

    #[cfg(unix)]
    #[test]
    fn force_keeps_modes() {
        // common practice, no source: replacing a file or folder keeps its permission bits.
        use std::os::unix::fs::PermissionsExt;
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("a.bin");
        fs::write(&out, b"one").unwrap();
        fs::set_permissions(&out, fs::Permissions::from_mode(0o600)).unwrap();
        write_with(&out, true, |t| {
            fs::write(t, b"two").map_err(|e| Error::io(t, e))
        })
        .unwrap();
        let mode = fs::metadata(&out).unwrap().permissions().mode() & 0o777;
        assert_eq!(mode, 0o600);
        let rep = dir.path().join("rep");
        let fill = |t: &Path| {
            fs::write(t.join("x"), b"x").map_err(|e| Error::io(t, e))?;
            Ok(vec!["x".to_string()])
        };
        write_dir_with(&rep, false, "report", &[], fill).unwrap();
        fs::set_permissions(&rep, fs::Permissions::from_mode(0o700)).unwrap();
        write_dir_with(&rep, true, "report", &[], fill).unwrap();
        let mode = fs::metadata(&rep).unwrap().permissions().mode() & 0o777;
        assert_eq!(mode, 0o700);
        // Only the report and the file are left: no temporaries, no old folder.
        assert_eq!(fs::read_dir(dir.path()).unwrap().count(), 2);
    }
}
