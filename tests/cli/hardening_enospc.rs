//! A real "No space left on device": outputs are written to a 32 KiB tmpfs, too small for them
//! but large enough to pass the free-space check made before the work (which counts only the
//! matrix, not the labels, provenance or report pages). The message must name the output,
//! say the disk is full once (the npz writer once wrapped the OS text twice), and leave no
//! output under the target name, no half-written file and no temporary.
//!
//! Mounting needs root (or CAP_SYS_ADMIN); elsewhere each test says it was skipped and passes.

use std::path::{Path, PathBuf};
use std::process::Command;

use crate::common;

use common::*;

const FULL: &str = "No space left on device";

/// A tmpfs of 32 KiB mounted on a fresh folder, unmounted on drop.
struct SmallDisk {
    dir: tempfile::TempDir,
}

impl SmallDisk {
    fn mount() -> Option<SmallDisk> {
        let dir = tempdir();
        let ok = Command::new("mount")
            .args(["-t", "tmpfs", "-o", "size=32k", "tmpfs"])
            .arg(dir.path())
            .output()
            .map(|o| o.status.success())
            .unwrap_or(false);
        if !ok {
            eprintln!("skipped: cannot mount a small tmpfs here (needs root)");
            return None;
        }
        Some(SmallDisk { dir })
    }

    fn path(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }

    /// Every name on the disk (temporaries are hidden dot-files, so they show here too).
    fn names(&self) -> Vec<String> {
        let mut v: Vec<String> = std::fs::read_dir(self.dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }
}

impl Drop for SmallDisk {
    fn drop(&mut self) {
        let _ = Command::new("umount").arg(self.dir.path()).status();
    }
}

/// 640 rows in 2 dims with long class names: the matrix is 5 KiB (what the free-space check
/// counts) but the grown file's label and provenance strings are far more than 32 KiB.
fn input(dir: &Path) -> PathBuf {
    let path = dir.join("in.csv");
    let mut s = String::from("label,f0,f1\n");
    for (c, n) in [300usize, 300, 40].into_iter().enumerate() {
        for i in 0..n {
            s += &format!(
                "a_rather_long_class_name_number_{c},{},{}\n",
                c as f32 + value(i, 0, 9),
                value(i, 1, 9)
            );
        }
    }
    std::fs::write(&path, s).unwrap();
    path
}

fn assert_disk_full_once(err: &str, target: &Path) {
    assert!(
        err.contains(&target.display().to_string()),
        "names the output: {err}"
    );
    assert_eq!(err.matches(FULL).count(), 1, "the OS text once: {err}");
    assert!(err.contains("free some space"), "{err}");
}

#[test]
fn grow_on_a_full_disk_says_so_once_and_leaves_nothing() {
    let Some(disk) = SmallDisk::mount() else {
        return;
    };
    let dir = tempdir();
    let input = input(dir.path());
    for ext in ["npz", "safetensors"] {
        let out = disk.path(&format!("out.{ext}"));
        let o = grow_file(
            &input,
            &out,
            &["--method", "interpolate", "--target", "largest", "--quiet"],
        );
        let err = stderr(&o);
        assert_eq!(o.status.code(), Some(2), "{ext}: {err}");
        assert_disk_full_once(&err, &out);
        assert!(disk.names().is_empty(), "{ext}: left {:?}", disk.names());
    }
}

#[test]
fn a_forced_replacement_on_a_full_disk_keeps_the_old_output() {
    let Some(disk) = SmallDisk::mount() else {
        return;
    };
    let dir = tempdir();
    let input = input(dir.path());
    let out = disk.path("out.npz");
    std::fs::write(&out, b"the old output").unwrap();
    let o = grow_file(
        &input,
        &out,
        &[
            "--method",
            "interpolate",
            "--target",
            "largest",
            "--force",
            "--quiet",
        ],
    );
    let err = stderr(&o);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert_disk_full_once(&err, &out);
    assert_eq!(std::fs::read(&out).unwrap(), b"the old output");
    assert_eq!(disk.names(), vec!["out.npz".to_string()]);
}

#[test]
fn an_assess_report_on_a_full_disk_says_so_once_and_leaves_nothing() {
    let Some(disk) = SmallDisk::mount() else {
        return;
    };
    let dir = tempdir();
    let input = input(dir.path());
    let report = disk.path("report");
    let o = assess_file(
        &input,
        &[
            "--probes",
            "knn",
            "--methods",
            "none,interpolate",
            "--report",
            report.to_str().unwrap(),
            "--quiet",
        ],
    );
    let err = stderr(&o);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert_disk_full_once(&err, &report);
    assert!(disk.names().is_empty(), "left {:?}", disk.names());
}
