//! The catalogue of awkward inputs (written by tests/reference/catalogue_make.py).
//!
//! tests/bad/: every broken file goes through each command listed for it in cases.json, via
//! the real binary, and must give a non-zero exit, an error naming the file and the problem,
//! no "panicked" anywhere, and no output file or report folder left behind.
//! tests/odd/: valid but unusual files must read to exactly the values numpy or Python's csv
//! module reads from them (expected.json, same script).

use std::path::{Path, PathBuf};
use std::process::Command;

use embloom::io::{ReadOptions, read};
use serde_json::Value;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn load_json(rel: &str) -> Value {
    let text = std::fs::read_to_string(root().join(rel)).unwrap();
    serde_json::from_str(&text).unwrap()
}

fn strings(v: &Value) -> Vec<String> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|s| s.as_str().unwrap().to_string())
        .collect()
}

/// Runs one command on a broken file and checks the refusal.
fn refuse(file: &str, command: &str, args: &[String], expect: &str, out: &Path) {
    let input = format!("tests/bad/{file}");
    let mut argv: Vec<String> = vec![command.into(), input.clone()];
    argv.extend(args.iter().cloned());
    let target = out.join(format!("{file}.{command}.out.npz"));
    let report = out.join(format!("{file}.{command}.report"));
    match command {
        "grow" => argv.extend([
            "--method".into(),
            "interpolate".into(),
            "--output".into(),
            target.display().to_string(),
        ]),
        "assess" => argv.extend([
            "--folds".into(),
            "2".into(),
            "--report".into(),
            report.display().to_string(),
        ]),
        _ => {}
    }
    let o = Command::new(env!("CARGO_BIN_EXE_embloom"))
        .args(&argv)
        .current_dir(root())
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&o.stdout);
    let stderr = String::from_utf8_lossy(&o.stderr);
    let all = format!("{stdout}{stderr}");
    let what = format!("{command} {file}");
    assert!(!o.status.success(), "{what}: exit status 0\n{all}");
    assert_eq!(
        o.status.code(),
        Some(2),
        "{what}: not a clean error exit\n{all}"
    );
    assert!(!all.contains("panicked"), "{what}: panicked\n{all}");
    assert!(
        stderr.contains(file),
        "{what}: the error does not name the file\n{stderr}"
    );
    assert!(
        stderr.contains(expect),
        "{what}: the error does not say '{expect}'\n{stderr}"
    );
    assert!(
        stderr.contains("fix:"),
        "{what}: no fix suggested\n{stderr}"
    );
    assert!(!target.exists(), "{what}: left an output file");
    assert!(!report.exists(), "{what}: left a report folder");
    // Nor any temporary file beside the targets.
    let left: Vec<_> = std::fs::read_dir(out).unwrap().collect();
    assert!(left.is_empty(), "{what}: left {left:?}");
}

#[test]
fn every_broken_file_is_refused_cleanly() {
    // Source: tests/reference/catalogue_make.py (numpy / csv module wrote the broken files).
    let cases = load_json("tests/bad/cases.json");
    let cases = cases.as_array().unwrap();
    let out = tempfile::tempdir().unwrap();
    let mut runs = 0;
    for c in cases {
        let file = c["file"].as_str().unwrap();
        let expect = c["expect"].as_str().unwrap();
        let args = strings(&c["args"]);
        for command in strings(&c["commands"]) {
            refuse(file, &command, &args, expect, out.path());
            runs += 1;
        }
    }
    eprintln!(
        "catalogue: {} broken files, {runs} refusals checked",
        cases.len()
    );
    assert!(cases.len() >= 30);
}

#[test]
fn every_broken_file_is_listed() {
    // The README table and cases.json must cover every file in tests/bad (no silent extras).
    let cases = load_json("tests/bad/cases.json");
    let listed: Vec<String> = cases
        .as_array()
        .unwrap()
        .iter()
        .flat_map(|c| {
            let mut v = vec![c["file"].as_str().unwrap().to_string()];
            v.extend(
                strings(&c["args"])
                    .into_iter()
                    .filter_map(|a| a.strip_prefix("tests/bad/").map(str::to_string)),
            );
            v
        })
        .collect();
    let readme = std::fs::read_to_string(root().join("tests/bad/README.md")).unwrap();
    for entry in std::fs::read_dir(root().join("tests/bad")).unwrap() {
        let name = entry.unwrap().file_name().to_string_lossy().into_owned();
        if name == "README.md" || name == "cases.json" {
            continue;
        }
        assert!(listed.contains(&name), "{name} is not in cases.json");
        assert!(readme.contains(&name), "{name} is not in the README table");
    }
}

#[test]
fn odd_files_read_as_numpy_and_csv_read_them() {
    // Source: tests/reference/catalogue_make.py — np.load for .npy/.npz, csv.reader (with
    // utf-8-sig for the BOM) for .csv/.tsv, values converted to float32 there.
    let expected = load_json("tests/odd/expected.json");
    let cases = expected.as_object().unwrap();
    assert!(cases.len() >= 7);
    for (name, want) in cases {
        let args = strings(&want["args"]);
        let mut opts = ReadOptions::default();
        if let [flag, file] = args.as_slice() {
            assert_eq!(flag, "--labels");
            opts.labels_file = Some(root().join(file));
        }
        let d = read(&root().join("tests/odd").join(name), &opts)
            .unwrap_or_else(|e| panic!("{name}: {e}"))
            .dataset;
        let want_x: Vec<Vec<f32>> = want["x"]
            .as_array()
            .unwrap()
            .iter()
            .map(|r| {
                r.as_array()
                    .unwrap()
                    .iter()
                    .map(|v| v.as_f64().unwrap() as f32)
                    .collect()
            })
            .collect();
        let got_x: Vec<Vec<f32>> = d.x.rows().into_iter().map(|r| r.to_vec()).collect();
        assert_eq!(got_x, want_x, "{name}: embeddings");
        let got_labels: Vec<String> = d
            .labels
            .iter()
            .map(|&l| d.classes[l as usize].clone())
            .collect();
        assert_eq!(got_labels, strings(&want["labels"]), "{name}: labels");
    }
}

#[test]
fn odd_files_pass_inspect() {
    // The binary accepts them too (exit 0), not only the library reader.
    let expected = load_json("tests/odd/expected.json");
    for (name, want) in expected.as_object().unwrap() {
        let mut argv = vec!["inspect".to_string(), format!("tests/odd/{name}")];
        argv.extend(strings(&want["args"]));
        let o = Command::new(env!("CARGO_BIN_EXE_embloom"))
            .args(&argv)
            .current_dir(root())
            .output()
            .unwrap();
        assert!(
            o.status.success(),
            "{name}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
    }
}
