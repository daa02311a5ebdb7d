//! A process-wide list of the temporary files and folders an output is being built in, so a
//! signal handler in the binary can remove them before the process exits. Drop handlers do
//! not run when a process exits on a signal, so without this list an interrupted write would
//! leave its hidden temporary behind.

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::Mutex;
use std::sync::atomic::{AtomicU64, Ordering};

static LIVE: Mutex<Option<HashMap<u64, PathBuf>>> = Mutex::new(None);
static NEXT: AtomicU64 = AtomicU64::new(0);

/// A registered temporary. Dropping it removes the path (file or folder) unless it was
/// [`kept`](Temporary::keep), and unregisters it either way.
#[derive(Debug)]
pub struct Temporary {
    id: u64,
    path: PathBuf,
    armed: bool,
}

impl Temporary {
    /// Registers `path`, which the caller has just created.
    pub fn register(path: PathBuf) -> Temporary {
        let id = NEXT.fetch_add(1, Ordering::Relaxed);
        let mut live = LIVE.lock().unwrap_or_else(|e| e.into_inner());
        live.get_or_insert_with(HashMap::new)
            .insert(id, path.clone());
        Temporary {
            id,
            path,
            armed: true,
        }
    }

    /// Where the temporary is.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// The temporary became the real output (it was renamed into place): forget it.
    pub fn keep(mut self) {
        self.armed = false;
    }
}

impl Drop for Temporary {
    fn drop(&mut self) {
        let mut live = LIVE.lock().unwrap_or_else(|e| e.into_inner());
        if let Some(map) = live.as_mut() {
            map.remove(&self.id);
        }
        drop(live);
        if self.armed {
            remove(&self.path);
        }
    }
}

fn remove(path: &Path) {
    match std::fs::symlink_metadata(path) {
        Ok(m) if m.is_dir() => {
            let _ = std::fs::remove_dir_all(path);
        }
        Ok(_) => {
            let _ = std::fs::remove_file(path);
        }
        Err(_) => {}
    }
}

/// Removes every live temporary. Called by the binary's signal handler just before it exits;
/// returns how many were removed.
pub fn remove_all() -> usize {
    let mut live = LIVE.lock().unwrap_or_else(|e| e.into_inner());
    let paths: Vec<PathBuf> = live
        .as_mut()
        .map(|m| m.drain().map(|(_, p)| p).collect())
        .unwrap_or_default();
    drop(live);
    for p in &paths {
        remove(p);
    }
    paths.len()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn remove_all_clears_registered_paths() {
        // common practice, no source: cleanup removes what was registered and nothing else.
        let dir = tempfile::tempdir().unwrap();
        let f = dir.path().join("a.tmp");
        let d = dir.path().join("b.tmp");
        std::fs::write(&f, b"x").unwrap();
        std::fs::create_dir(&d).unwrap();
        std::fs::write(d.join("inner"), b"y").unwrap();
        let tf = Temporary::register(f.clone());
        let td = Temporary::register(d.clone());
        let kept = dir.path().join("kept");
        std::fs::write(&kept, b"z").unwrap();
        Temporary::register(kept.clone()).keep();
        assert!(remove_all() >= 2);
        assert!(!f.exists() && !d.exists() && kept.exists());
        tf.keep();
        td.keep();
    }
}
