//! Atomic outputs under SIGKILL: grow and assess --report are killed partway through a large
//! job; no partial file or report folder may appear under the target name, and an earlier
//! output at that path must stay byte-identical.

use crate::common;

use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

use embloom::data::Dataset;
use embloom::io::{AugmentedSet, write};
use ndarray::Array2;

/// A large imbalanced set (so `--target largest` makes a long job with a big output).
fn big_input(dir: &Path, rows: usize, dims: usize) -> PathBuf {
    let path = dir.join("big.npz");
    let labels: Vec<u32> = (0..rows).map(|i| u32::from(i % 10 == 0)).collect();
    let x = Array2::from_shape_fn((rows, dims), |(i, j)| {
        common::value(i, j, 3) + labels[i] as f32
    });
    let set = AugmentedSet::all_real(Dataset::new(x, labels, vec!["a".into(), "b".into()]));
    write(&path, &set, true).unwrap();
    path
}

fn spawn(args: &[&str]) -> Child {
    Command::new(env!("CARGO_BIN_EXE_embloom"))
        .args(args)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap()
}

/// Entries of `dir` whose names start with `prefix` (temporary files and folders).
fn temps(dir: &Path, prefix: &str) -> Vec<String> {
    std::fs::read_dir(dir)
        .unwrap()
        .filter_map(|e| e.ok())
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n.starts_with(prefix))
        .collect()
}

/// Waits until a temporary entry for `name` appears in `dir` (the writer has started), then
/// lets it write for `delay` and kills the child with SIGKILL. Returns whether it was caught
/// mid-write (false when it finished first).
fn kill_while_writing(child: &mut Child, dir: &Path, name: &str, delay: Duration) -> bool {
    let prefix = format!(".{name}.");
    let start = Instant::now();
    loop {
        if let Some(st) = child.try_wait().unwrap() {
            assert!(st.success(), "the job failed before it could be killed");
            return false;
        }
        if !temps(dir, &prefix).is_empty() {
            std::thread::sleep(delay);
            break;
        }
        assert!(start.elapsed() < Duration::from_secs(300), "no temp file");
        std::thread::sleep(Duration::from_micros(200));
    }
    // Child::kill sends SIGKILL on Unix.
    let killed = child.try_wait().unwrap().is_none();
    child.kill().ok();
    child.wait().unwrap();
    killed
}

#[test]
fn grow_killed_midway_leaves_no_partial_file() {
    let dir = tempfile::tempdir().unwrap();
    let input = big_input(dir.path(), 200_000, 64);
    let out = dir.path().join("grown.npz");
    let out_s = out.to_str().unwrap().to_string();
    let args = [
        "grow",
        input.to_str().unwrap(),
        "--method",
        "interpolate",
        "--target",
        "largest",
        "--output",
        &out_s,
        "--quiet",
    ];
    // 1. No earlier output: after the kill, nothing under the target name.
    let mut child = spawn(&args);
    let caught = kill_while_writing(
        &mut child,
        dir.path(),
        "grown.npz",
        Duration::from_millis(30),
    );
    assert!(caught, "grow finished before the kill; make the job larger");
    assert!(
        !out.exists(),
        "a partial output appeared under the target name"
    );

    // 2. An earlier output at that path stays byte-identical through a killed --force run.
    std::fs::write(&out, b"earlier output").unwrap();
    let mut forced: Vec<&str> = args.to_vec();
    forced.push("--force");
    let mut child = spawn(&forced);
    let caught = kill_while_writing(
        &mut child,
        dir.path(),
        "grown.npz",
        Duration::from_millis(30),
    );
    assert!(caught, "grow finished before the kill");
    assert_eq!(std::fs::read(&out).unwrap(), b"earlier output");

    // 3. A later run ignores the stale temporary files and writes a complete output.
    let stale = temps(dir.path(), ".grown.npz.");
    let o = common::embloom(&forced, &[]);
    assert!(o.status.success(), "{}", common::stderr(&o));
    let back = embloom::io::read(&out, &embloom::io::ReadOptions::default()).unwrap();
    assert_eq!(back.dataset.n_rows(), 2 * 180_000);
    // Stale temporaries never carry the target's name (they start with '.').
    assert!(stale.iter().all(|s| s != "grown.npz"));
}

#[test]
fn assess_killed_while_writing_report_leaves_no_partial_folder() {
    let dir = tempfile::tempdir().unwrap();
    let input = big_input(dir.path(), 20_000, 32);
    let report = dir.path().join("report");
    let report_s = report.to_str().unwrap().to_string();
    let args = [
        "assess",
        input.to_str().unwrap(),
        "--methods",
        "interpolate,extrapolate",
        "--probes",
        "knn",
        "--folds",
        "3",
        "--report",
        &report_s,
        "--quiet",
    ];
    let complete = |p: &Path| {
        ["results.json", "summary.csv", "report.html"]
            .iter()
            .all(|f| p.join(f).is_file())
    };
    // Killed at some point of the job (during the folds or while writing the folder): the
    // report folder is absent or complete, never partial.
    for delay_ms in [0u64, 1, 3] {
        let _ = std::fs::remove_dir_all(&report);
        let mut child = spawn(&args);
        kill_while_writing(
            &mut child,
            dir.path(),
            "report",
            Duration::from_millis(delay_ms),
        );
        assert!(
            !report.exists() || complete(&report),
            "a partial report folder is under the target name"
        );
    }
    // An earlier report at the path survives a killed --force run (or is replaced whole).
    std::fs::create_dir_all(&report).unwrap();
    std::fs::write(report.join("results.json"), b"{\"earlier\": true}\n").unwrap();
    let mut forced: Vec<&str> = args.to_vec();
    forced.push("--force");
    let mut child = spawn(&forced);
    std::thread::sleep(Duration::from_millis(300));
    child.kill().ok();
    child.wait().unwrap();
    let old = std::fs::read(report.join("results.json")).unwrap();
    assert!(
        old == b"{\"earlier\": true}\n" || complete(&report),
        "the earlier report was damaged"
    );
}
