//! Output safety: `--force` never deletes a folder that is not embloom's own or that holds an
//! input, never replaces an input file, keeps the replaced output's mode; a target that
//! appears mid-write is kept; a report folder is swapped, never missing; SIGINT and SIGTERM
//! remove temporaries and exit 130/143; every output target is checked before any work.
//! (Expected behaviour: common practice for a tool that writes into user folders, no source.)

use crate::common;

use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use common::{embloom, stderr, write_csv};

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

#[test]
fn force_never_replaces_a_folder_holding_user_files_or_the_input() {
    let dir = common::tempdir();
    let data = dir.path().join("data");
    std::fs::create_dir(&data).unwrap();
    let input = data.join("base.csv");
    write_csv(&input, &[20, 8], 4, 1);
    std::fs::write(data.join("notes.txt"), b"keep me").unwrap();
    let o = embloom(
        &[
            "assess",
            s(&input),
            "--folds",
            "2",
            "--report",
            s(&data),
            "--force",
            "--quiet",
        ],
        &[],
    );
    assert!(!o.status.success());
    assert!(stderr(&o).contains("input"), "{}", stderr(&o));
    assert!(input.is_file() && data.join("notes.txt").is_file());

    // A folder with only user files (no input inside) is refused too, naming what is in the way.
    let other = dir.path().join("other");
    std::fs::create_dir(&other).unwrap();
    std::fs::write(other.join("thesis.tex"), b"keep me").unwrap();
    let o = embloom(
        &[
            "assess",
            s(&input),
            "--folds",
            "2",
            "--report",
            s(&other),
            "--force",
            "--quiet",
        ],
        &[],
    );
    assert!(!o.status.success());
    assert!(stderr(&o).contains("thesis.tex"), "{}", stderr(&o));
    assert!(other.join("thesis.tex").is_file());
    let o = embloom(&["demo", "--out", s(&other), "--force", "--quiet"], &[]);
    assert!(!o.status.success());
    assert!(other.join("thesis.tex").is_file());

    // embloom's own report folder is replaced with --force.
    let rep = dir.path().join("rep");
    let args = [
        "assess",
        s(&input),
        "--folds",
        "2",
        "--report",
        s(&rep),
        "--quiet",
    ];
    assert!(embloom(&args, &[]).status.success());
    let mut forced = args.to_vec();
    forced.push("--force");
    let o = embloom(&forced, &[]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(rep.join("results.json").is_file());
    assert!(common::only_these(dir.path(), &["data", "other", "rep"]));
}

#[test]
fn output_naming_the_input_is_refused_even_with_force() {
    let dir = common::tempdir();
    let input = dir.path().join("in.csv");
    write_csv(&input, &[20, 8], 4, 1);
    let before = std::fs::read(&input).unwrap();
    let o = embloom(
        &[
            "grow",
            s(&input),
            "--method",
            "interpolate",
            "-o",
            s(&input),
            "--force",
            "--quiet",
        ],
        &[],
    );
    assert!(!o.status.success());
    assert!(stderr(&o).contains("input"), "{}", stderr(&o));
    // The same file under another name (a hard link): same device and inode.
    let link = dir.path().join("link.csv");
    std::fs::hard_link(&input, &link).unwrap();
    let o = embloom(
        &[
            "grow",
            s(&input),
            "--method",
            "interpolate",
            "-o",
            s(&link),
            "--force",
            "--quiet",
        ],
        &[],
    );
    assert!(!o.status.success());
    assert_eq!(std::fs::read(&input).unwrap(), before);
}

#[test]
fn a_file_appearing_at_the_target_mid_write_is_not_overwritten() {
    let dir = common::tempdir();
    let out = dir.path().join("out.bin");
    let err = embloom::io::write_atomically(&out, false, |tmp| {
        std::fs::write(&out, b"theirs").unwrap();
        std::fs::write(tmp, b"ours").map_err(|e| embloom::Error::io(tmp, e))
    })
    .unwrap_err();
    assert!(err.to_string().contains("appeared"), "{err}");
    assert_eq!(std::fs::read(&out).unwrap(), b"theirs");
    assert!(common::only_these(dir.path(), &["out.bin"]));
}

#[test]
fn replacing_a_report_folder_never_leaves_it_missing() {
    let dir = common::tempdir();
    let rep = dir.path().join("rep");
    let fill = |t: &Path| {
        std::fs::write(t.join("x"), b"x").map_err(|e| embloom::Error::io(t, e))?;
        Ok(vec!["x".to_string()])
    };
    embloom::io::write_dir_atomically(&rep, false, "report", &[], fill).unwrap();
    let done = std::sync::Arc::new(std::sync::atomic::AtomicBool::new(false));
    let watcher = {
        let done = done.clone();
        let probe = rep.join("x");
        std::thread::spawn(move || {
            let mut missing = 0usize;
            while !done.load(std::sync::atomic::Ordering::Relaxed) {
                if !probe.exists() {
                    missing += 1;
                }
            }
            missing
        })
    };
    for _ in 0..300 {
        embloom::io::write_dir_atomically(&rep, true, "report", &[], fill).unwrap();
    }
    done.store(true, std::sync::atomic::Ordering::Relaxed);
    assert_eq!(watcher.join().unwrap(), 0, "the report folder was missing");
    assert!(common::only_these(dir.path(), &["rep"]));
}

#[cfg(unix)]
#[test]
fn force_keeps_the_mode_of_the_replaced_file_and_folder() {
    use std::os::unix::fs::PermissionsExt;
    let dir = common::tempdir();
    let input = dir.path().join("in.csv");
    write_csv(&input, &[20, 8], 4, 1);
    let out = dir.path().join("out.npz");
    let grow = [
        "grow",
        s(&input),
        "--method",
        "interpolate",
        "-o",
        s(&out),
        "--quiet",
    ];
    assert!(embloom(&grow, &[]).status.success());
    std::fs::set_permissions(&out, std::fs::Permissions::from_mode(0o600)).unwrap();
    let mut forced = grow.to_vec();
    forced.push("--force");
    assert!(embloom(&forced, &[]).status.success());
    let mode = |p: &Path| std::fs::metadata(p).unwrap().permissions().mode() & 0o777;
    assert_eq!(mode(&out), 0o600);

    let rep = dir.path().join("rep");
    let assess = [
        "assess",
        s(&input),
        "--folds",
        "2",
        "--report",
        s(&rep),
        "--quiet",
    ];
    assert!(embloom(&assess, &[]).status.success());
    std::fs::set_permissions(&rep, std::fs::Permissions::from_mode(0o700)).unwrap();
    let mut forced = assess.to_vec();
    forced.push("--force");
    let o = embloom(&forced, &[]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert_eq!(mode(&rep), 0o700);
}

#[test]
fn output_targets_are_checked_before_any_work() {
    let dir = common::tempdir();
    // A single-class file is refused by assess itself; a bad target must be named first.
    let input = dir.path().join("one.csv");
    write_csv(&input, &[10], 3, 1);
    let afile = dir.path().join("afile");
    std::fs::write(&afile, b"x").unwrap();
    let o = embloom(
        &[
            "assess",
            s(&input),
            "--report",
            s(&afile),
            "--force",
            "--quiet",
        ],
        &[],
    );
    assert!(!o.status.success());
    let e = stderr(&o);
    assert!(
        e.contains("not a folder") && !e.contains("single class"),
        "{e}"
    );
    let sub = afile.join("sub");
    let o = embloom(&["assess", s(&input), "--report", s(&sub), "--quiet"], &[]);
    let e = stderr(&o);
    assert!(
        e.contains("is a file") && !e.contains("single class"),
        "{e}"
    );
}

/// Starts a long grow to CSV, waits for its temporary, sends `sig`; returns the exit code.
#[cfg(unix)]
fn interrupt_grow(sig: i32) -> (Option<i32>, Vec<String>) {
    use std::os::unix::process::ExitStatusExt;
    let dir = common::tempdir();
    let input = dir.path().join("in.csv");
    write_csv(&input, &[4000, 40], 16, 2);
    let out = dir.path().join("t.csv");
    let mut child = Command::new(env!("CARGO_BIN_EXE_embloom"))
        .args([
            "grow",
            s(&input),
            "--method",
            "interpolate",
            "--target",
            "x2000",
            "-o",
            s(&out),
            "--quiet",
        ])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let start = Instant::now();
    let temps = |d: &Path| -> Vec<String> {
        std::fs::read_dir(d)
            .unwrap()
            .filter_map(|e| e.ok())
            .map(|e| e.file_name().to_string_lossy().into_owned())
            .filter(|n| n.starts_with(".t.csv."))
            .collect()
    };
    while temps(dir.path()).is_empty() {
        assert!(child.try_wait().unwrap().is_none(), "grow ended too soon");
        assert!(start.elapsed() < Duration::from_secs(120));
        std::thread::sleep(Duration::from_millis(2));
    }
    // SAFETY: sending a signal to our own child process.
    unsafe { libc::kill(child.id() as i32, sig) };
    let st = child.wait().unwrap();
    assert!(st.signal().is_none(), "killed by the signal, not exited");
    (st.code(), temps(dir.path()))
}

#[cfg(unix)]
#[test]
fn sigint_and_sigterm_remove_temporaries_and_exit_130_143() {
    let (code, left) = interrupt_grow(libc::SIGINT);
    assert_eq!(code, Some(130));
    assert!(left.is_empty(), "{left:?}");
    let (code, left) = interrupt_grow(libc::SIGTERM);
    assert_eq!(code, Some(143));
    assert!(left.is_empty(), "{left:?}");
}
