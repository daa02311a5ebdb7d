//! Checks on an output target made before any work starts, so a refusal costs nothing: the
//! target's kind, `--force`, the folder it goes in, write permission, free space, and whether
//! it would replace an input file or a folder that is not embloom's own.
//!
//! A folder embloom writes (a report, the demo's outputs) carries a small manifest listing
//! the files embloom put there. `--force` replaces such a folder only when the manifest is
//! there, nothing else is in the folder, and no input file lies inside it; any other folder
//! is the user's and is never deleted.

use std::path::{Path, PathBuf};

use crate::error::{Error, Result};

/// Name of the manifest inside every folder embloom writes.
pub const MANIFEST: &str = ".embloom-manifest";
const MAGIC: &str = "embloom output folder";

/// Writes the manifest of a folder of `kind` (e.g. "report") listing `files`.
pub fn write_manifest(dir: &Path, kind: &str, files: &[String]) -> Result<()> {
    let mut text = format!("{MAGIC}\n{kind}\n");
    for f in files {
        text.push_str(f);
        text.push('\n');
    }
    let path = dir.join(MANIFEST);
    std::fs::write(&path, text).map_err(|e| Error::io(&path, e))?;
    std::fs::File::open(&path)
        .and_then(|f| f.sync_all())
        .map_err(|e| Error::io(&path, e))
}

/// The files a folder's manifest lists, or `None` when it has no embloom manifest.
pub fn read_manifest(dir: &Path) -> Option<Vec<String>> {
    let text = std::fs::read_to_string(dir.join(MANIFEST)).ok()?;
    let mut lines = text.lines();
    if lines.next()? != MAGIC {
        return None;
    }
    lines.next()?;
    Some(lines.map(str::to_string).collect())
}

/// Checks a file target: not a folder, not existing unless `force`, never one of `inputs`,
/// in an existing writable folder with room for `need` bytes where that is known.
pub fn check_file(path: &Path, force: bool, inputs: &[&Path], need: Option<u64>) -> Result<()> {
    match std::fs::metadata(path) {
        Ok(m) if m.is_dir() => {
            return Err(Error::output(
                path,
                "is a folder",
                "give a file name for the output",
            ));
        }
        Ok(_) => {
            if let Some(input) = inputs.iter().find(|i| same_file(i, path)) {
                return Err(Error::output(
                    path,
                    format!(
                        "is the input file {}; embloom never replaces its input, even with `force`",
                        input.display()
                    ),
                    "write the output under another name",
                ));
            }
            if !force {
                return Err(Error::output(
                    path,
                    "already exists; refusing to overwrite it",
                    "pass `force` to replace it, or choose another name",
                ));
            }
        }
        Err(_) => {}
    }
    let dir = parent_of(path);
    if !dir.is_dir() {
        return Err(missing_folder(path, &dir));
    }
    check_writable(path, &dir)?;
    if let (Some(need), Some(free)) = (need, free_space(&dir))
        && need > free
    {
        return Err(Error::output(
            path,
            format!(
                "needs about {} but {} has {} free",
                crate::memory::human(need),
                dir.display(),
                crate::memory::human(free)
            ),
            "free some space or write the output to another disk",
        ));
    }
    Ok(())
}

/// The inputs a read with `read` takes from: the file itself and any separate labels file.
pub fn inputs_of<'a>(input: &'a Path, read: &'a crate::io::ReadOptions) -> Vec<&'a Path> {
    let mut v = vec![input];
    if let Some(l) = &read.labels_file {
        v.push(l.as_path());
    }
    v
}

/// A lower bound on the bytes an output of `rows` × `dims` takes on disk: the stored type's
/// bytes a value in the binary formats (`value_bytes`), about 8 characters a value in CSV/TSV.
pub fn output_bytes(path: &Path, rows: usize, dims: usize, value_bytes: usize) -> u64 {
    let per_value = match path.extension().and_then(|e| e.to_str()) {
        Some("csv") | Some("tsv") => 8,
        _ => value_bytes as u64,
    };
    (rows as u64)
        .saturating_mul(dims as u64)
        .saturating_mul(per_value)
}

/// Checks a folder target: when it exists it must be a folder, `force` must be given, and it
/// must be embloom's own (manifest, nothing foreign, no input inside). Its parent may be
/// created, but the nearest existing ancestor must be a writable folder.
pub fn check_dir(dir: &Path, force: bool, inputs: &[&Path]) -> Result<()> {
    match std::fs::symlink_metadata(dir) {
        Ok(m) if !m.is_dir() => {
            return Err(Error::output(
                dir,
                "exists and is not a folder, so it is not replaced even with `force`",
                "remove it or choose another folder",
            ));
        }
        Ok(_) if !force => {
            return Err(Error::output(
                dir,
                "already exists",
                "pass `force` to replace it, or choose another folder",
            ));
        }
        Ok(_) => check_ours(dir, inputs)?,
        Err(_) => {}
    }
    let mut anc = parent_of(dir);
    loop {
        match std::fs::metadata(&anc) {
            Ok(m) if m.is_dir() => break,
            Ok(_) => {
                return Err(Error::output(
                    dir,
                    format!(
                        "{} is a file, so no folder can be made under it",
                        anc.display()
                    ),
                    "choose a folder path whose parents are folders",
                ));
            }
            Err(_) => match anc.parent() {
                Some(p) if !p.as_os_str().is_empty() => anc = p.to_path_buf(),
                _ => {
                    anc = PathBuf::from(".");
                    break;
                }
            },
        }
    }
    check_writable(dir, &anc)
}

/// Makes `dir` an empty folder of embloom's own for a command that writes several outputs
/// into it step by step (the demo). An existing `dir` is cleared only with `force` and only
/// after [`check_dir`] found it to be embloom's; its mode is kept. The manifest is written
/// first, so a run cut short still leaves a folder `--force` may replace.
pub fn prepare_own_dir(dir: &Path, force: bool, files: &[&str]) -> Result<()> {
    check_dir(dir, force, &[])?;
    let old_mode = std::fs::metadata(dir).ok().map(|m| m.permissions());
    if old_mode.is_some() {
        std::fs::remove_dir_all(dir).map_err(|e| Error::io(dir, e))?;
    }
    std::fs::create_dir_all(dir).map_err(|e| Error::io(dir, e))?;
    if let Some(p) = old_mode {
        std::fs::set_permissions(dir, p).map_err(|e| Error::io(dir, e))?;
    }
    let names: Vec<String> = files.iter().map(|f| f.to_string()).collect();
    write_manifest(dir, "demo", &names)
}

/// Refuses a folder that is not embloom's own or that holds an input file.
fn check_ours(dir: &Path, inputs: &[&Path]) -> Result<()> {
    for input in inputs {
        if contains(dir, input) {
            return Err(Error::output(
                dir,
                format!(
                    "holds the input file {}; embloom never replaces a folder holding its input",
                    input.display()
                ),
                "choose a new folder for the output",
            ));
        }
    }
    let Some(listed) = read_manifest(dir) else {
        let entries = foreign_entries(dir, &[]);
        return Err(Error::output(
            dir,
            format!(
                "is not a folder embloom wrote (it has no {MANIFEST}), so `force` does not replace it{}",
                describe_entries(&entries)
            ),
            "choose a new folder, or remove this one yourself if it holds nothing you need",
        ));
    };
    let foreign = foreign_entries(dir, &listed);
    if !foreign.is_empty() {
        return Err(Error::output(
            dir,
            format!(
                "holds files embloom did not write, so `force` does not replace it{}",
                describe_entries(&foreign)
            ),
            "move those files out, or choose a new folder",
        ));
    }
    Ok(())
}

/// Entries of `dir` not listed (and not the manifest itself).
fn foreign_entries(dir: &Path, listed: &[String]) -> Vec<String> {
    let Ok(rd) = std::fs::read_dir(dir) else {
        return vec![];
    };
    let mut out: Vec<String> = rd
        .filter_map(|e| e.ok())
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n != MANIFEST && !listed.iter().any(|l| l == n))
        .collect();
    out.sort();
    out
}

fn describe_entries(entries: &[String]) -> String {
    if entries.is_empty() {
        return String::new();
    }
    let shown: Vec<String> = entries
        .iter()
        .take(5)
        .map(|e| crate::report::display_name(e, 60))
        .collect();
    let more = if entries.len() > 5 {
        format!(" and {} more", entries.len() - 5)
    } else {
        String::new()
    };
    format!("; in the way: {}{more}", shown.join(", "))
}

/// True when `file` lies anywhere under `dir` (by path, or by device and inode).
fn contains(dir: &Path, file: &Path) -> bool {
    if let (Ok(d), Ok(f)) = (dir.canonicalize(), file.canonicalize())
        && f.starts_with(&d)
    {
        return true;
    }
    let Some(id) = file_id(file) else {
        return false;
    };
    let mut stack = vec![dir.to_path_buf()];
    let mut seen = 0usize;
    while let Some(d) = stack.pop() {
        let Ok(rd) = std::fs::read_dir(&d) else {
            continue;
        };
        for e in rd.filter_map(|e| e.ok()) {
            seen += 1;
            if seen > 100_000 {
                return false;
            }
            let p = e.path();
            match e.file_type() {
                Ok(t) if t.is_dir() => stack.push(p),
                Ok(_) if file_id(&p) == Some(id) => return true,
                _ => {}
            }
        }
    }
    false
}

/// Device and inode of a file, following links.
fn file_id(p: &Path) -> Option<(u64, u64)> {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        std::fs::metadata(p).ok().map(|m| (m.dev(), m.ino()))
    }
    #[cfg(not(unix))]
    {
        p.canonicalize().ok().map(|c| {
            use std::hash::{Hash, Hasher};
            let mut h = std::collections::hash_map::DefaultHasher::new();
            c.hash(&mut h);
            (0, h.finish())
        })
    }
}

/// True when both paths name the same file (same device and inode).
pub fn same_file(a: &Path, b: &Path) -> bool {
    matches!((file_id(a), file_id(b)), (Some(x), Some(y)) if x == y)
}

/// The folder a path goes in (`.` for a bare name).
pub fn parent_of(path: &Path) -> PathBuf {
    match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

fn missing_folder(path: &Path, dir: &Path) -> Error {
    if dir.exists() {
        Error::output(
            path,
            format!("{} is a file, not a folder", dir.display()),
            "choose an output path inside a folder",
        )
    } else {
        Error::output(
            path,
            format!("folder {} does not exist", dir.display()),
            "create the folder first",
        )
    }
}

fn check_writable(target: &Path, dir: &Path) -> Result<()> {
    #[cfg(unix)]
    {
        use std::ffi::CString;
        use std::os::unix::ffi::OsStrExt;
        if let Ok(c) = CString::new(dir.as_os_str().as_bytes()) {
            // SAFETY: a valid NUL-terminated path that outlives the call.
            let rc = unsafe { libc::access(c.as_ptr(), libc::W_OK | libc::X_OK) };
            if rc != 0 {
                let e = std::io::Error::last_os_error();
                return Err(Error::output(
                    target,
                    format!("cannot write in {}: {}", dir.display(), os_reason(&e)),
                    "choose a folder you can write to, or change its permissions",
                ));
            }
        }
    }
    let _ = (target, dir);
    Ok(())
}

/// The OS's reason without the "(os error N)" suffix, so a message does not repeat it.
pub fn os_reason(e: &std::io::Error) -> String {
    let s = e.to_string();
    match s.find(" (os error") {
        Some(i) => s[..i].to_string(),
        None => s,
    }
}

/// Bytes free to an unprivileged writer in the file system holding `dir`.
pub fn free_space(dir: &Path) -> Option<u64> {
    #[cfg(unix)]
    {
        use std::ffi::CString;
        use std::os::unix::ffi::OsStrExt;
        let c = CString::new(dir.as_os_str().as_bytes()).ok()?;
        // SAFETY: statvfs fills the zeroed struct; the path outlives the call.
        let mut s: libc::statvfs = unsafe { std::mem::zeroed() };
        let rc = unsafe { libc::statvfs(c.as_ptr(), &mut s) };
        if rc != 0 {
            return None;
        }
        Some((s.f_bavail as u64).saturating_mul(s.f_frsize as u64))
    }
    #[cfg(not(unix))]
    {
        let _ = dir;
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn force_refuses_foreign_folders_and_inputs() {
        // common practice, no source: --force replaces only what embloom wrote.
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path().join("rep");
        std::fs::create_dir(&d).unwrap();
        std::fs::write(d.join("notes.txt"), b"mine").unwrap();
        let e = check_dir(&d, true, &[]).unwrap_err().to_string();
        assert!(e.contains("notes.txt"), "{e}");
        write_manifest(&d, "report", &["notes.txt".into()]).unwrap();
        check_dir(&d, true, &[]).unwrap();
        let input = d.join("notes.txt");
        let e = check_dir(&d, true, &[&input]).unwrap_err().to_string();
        assert!(e.contains("input"), "{e}");
        let e = check_file(&input, true, &[&input], None)
            .unwrap_err()
            .to_string();
        assert!(e.contains("input"), "{e}");
    }
}
