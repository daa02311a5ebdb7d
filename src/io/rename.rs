//! The two renames an output needs beyond POSIX `rename`: one that refuses to replace an
//! existing name (so a file that appears at the target after the last check is never
//! overwritten), and one that swaps two names in one step (so replacing a report folder never
//! leaves a moment with no report at all).

use std::io;
use std::path::Path;

/// Renames `from` to `to`, failing with `AlreadyExists` if `to` exists. Uses
/// `renameat2(RENAME_NOREPLACE)` on Linux; where the file system lacks it (and on other
/// systems) a file is hard-linked to `to` (which also refuses an existing name) and then
/// unlinked from `from`. Folders cannot be hard-linked, so there the fallback checks and
/// renames, which leaves a short window.
pub fn rename_noreplace(from: &Path, to: &Path) -> io::Result<()> {
    #[cfg(target_os = "linux")]
    {
        match renameat2(from, to, libc::RENAME_NOREPLACE) {
            Ok(()) => return Ok(()),
            Err(e) if unsupported(&e) => {}
            Err(e) => return Err(e),
        }
    }
    if std::fs::symlink_metadata(from)?.is_dir() {
        if std::fs::symlink_metadata(to).is_ok() {
            return Err(io::Error::from(io::ErrorKind::AlreadyExists));
        }
        return std::fs::rename(from, to);
    }
    std::fs::hard_link(from, to)?;
    std::fs::remove_file(from)
}

/// Swaps `a` and `b` atomically (`renameat2(RENAME_EXCHANGE)`). Returns `Ok(false)` when the
/// system or file system cannot exchange, so the caller can fall back.
pub fn exchange(a: &Path, b: &Path) -> io::Result<bool> {
    #[cfg(target_os = "linux")]
    {
        match renameat2(a, b, libc::RENAME_EXCHANGE) {
            Ok(()) => Ok(true),
            Err(e) if unsupported(&e) => Ok(false),
            Err(e) => Err(e),
        }
    }
    #[cfg(not(target_os = "linux"))]
    {
        let _ = (a, b);
        Ok(false)
    }
}

#[cfg(target_os = "linux")]
fn unsupported(e: &io::Error) -> bool {
    matches!(
        e.raw_os_error(),
        Some(libc::EINVAL) | Some(libc::ENOSYS) | Some(libc::EOPNOTSUPP)
    )
}

#[cfg(target_os = "linux")]
fn renameat2(from: &Path, to: &Path, flags: libc::c_uint) -> io::Result<()> {
    use std::ffi::CString;
    use std::os::unix::ffi::OsStrExt;
    let cstr = |p: &Path| {
        CString::new(p.as_os_str().as_bytes())
            .map_err(|_| io::Error::new(io::ErrorKind::InvalidInput, "path contains a NUL byte"))
    };
    let (f, t) = (cstr(from)?, cstr(to)?);
    // SAFETY: both pointers are valid NUL-terminated strings that outlive the call.
    let rc = unsafe {
        libc::renameat2(
            libc::AT_FDCWD,
            f.as_ptr(),
            libc::AT_FDCWD,
            t.as_ptr(),
            flags,
        )
    };
    if rc == 0 {
        Ok(())
    } else {
        Err(io::Error::last_os_error())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn noreplace_refuses_and_exchange_swaps() {
        // common practice, no source: the documented renameat2 semantics.
        let dir = tempfile::tempdir().unwrap();
        let a = dir.path().join("a");
        let b = dir.path().join("b");
        std::fs::write(&a, b"A").unwrap();
        std::fs::write(&b, b"B").unwrap();
        let e = rename_noreplace(&a, &b).unwrap_err();
        assert_eq!(e.kind(), io::ErrorKind::AlreadyExists);
        assert_eq!(std::fs::read(&b).unwrap(), b"B");
        if exchange(&a, &b).unwrap() {
            assert_eq!(std::fs::read(&a).unwrap(), b"B");
            assert_eq!(std::fs::read(&b).unwrap(), b"A");
        }
        let c = dir.path().join("c");
        rename_noreplace(&a, &c).unwrap();
        assert!(!a.exists() && c.exists());
    }
}
