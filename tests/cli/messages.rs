//! Error and warning wording for odd inputs and option values: the file, the problem and a
//! fix, each said once and the right way round (common practice, no source).

use crate::common;

use common::{assess_file, embloom, stderr};

/// A version 1.0 `.npy` file (numpy format spec: magic, header length, dict padded to 64).
fn npy(path: &std::path::Path, descr: &str, shape: &str, data: &[u8]) {
    let mut header = format!("{{'descr': '{descr}', 'fortran_order': False, 'shape': {shape}, }}");
    while (10 + header.len() + 1) % 64 != 0 {
        header.push(' ');
    }
    header.push('\n');
    let mut b = b"\x93NUMPY\x01\x00".to_vec();
    b.extend((header.len() as u16).to_le_bytes());
    b.extend(header.as_bytes());
    b.extend(data);
    std::fs::write(path, b).unwrap();
}

fn small_csv(path: &std::path::Path) {
    let mut s = String::from("label,f0,f1\n");
    for c in 0..3 {
        for r in 0..10 {
            s += &format!("c{c},{},{}\n", c as f32 + 0.1 * r as f32, (r % 4) as f32);
        }
    }
    std::fs::write(path, s).unwrap();
}

#[test]
fn an_empty_class_name_is_refused_naming_file_and_row() {
    let dir = common::tempdir();
    let x = dir.path().join("x.npy");
    let y = dir.path().join("y.npy");
    let rows = 4;
    let data: Vec<u8> = (0..rows * 2)
        .flat_map(|i| (i as f32).to_le_bytes())
        .collect();
    npy(&x, "<f4", "(4, 2)", &data);
    // '<U1' labels ["a", "", "a", "b"]: UTF-32LE, one code unit each, "" is all NUL.
    let labels: Vec<u8> = ['a', '\0', 'a', 'b']
        .iter()
        .flat_map(|c| (*c as u32).to_le_bytes())
        .collect();
    npy(&y, "<U1", "(4,)", &labels);
    let o = embloom(
        &[
            "inspect",
            x.to_str().unwrap(),
            "--labels",
            y.to_str().unwrap(),
        ],
        &[],
    );
    let e = stderr(&o);
    assert!(!o.status.success(), "{e}");
    assert!(
        e.contains("row 1") && e.contains("empty") && e.contains("fix:"),
        "{e}"
    );
    assert!(!e.contains("panicked"), "{e}");
}

#[test]
fn a_huge_linear_l2_advises_a_smaller_one() {
    let dir = common::tempdir();
    let input = dir.path().join("s.csv");
    small_csv(&input);
    let o = assess_file(
        &input,
        &[
            "--folds",
            "2",
            "--probes",
            "linear",
            "--linear-l2",
            "1e38",
            "--report",
            dir.path().join("r").to_str().unwrap(),
        ],
    );
    let all = common::stdout(&o) + &stderr(&o);
    // With this λ the fit stops at once (the penalty's scale breaks the line search).
    assert!(all.contains("did not converge"), "{all}");
    assert!(
        all.contains("1e38") && all.contains("smaller") && !all.contains("a larger --linear-l2"),
        "{all}"
    );
}

/// The library names parameters (`classes`, `repeats`, `k`); the binary prints them as the
/// flags that set them and completes the fix with the flag to use (common practice, no source).
#[test]
fn parameter_errors_name_the_flag_that_sets_them() {
    let dir = common::tempdir();
    let input = dir.path().join("in.csv");
    small_csv(&input);
    let out = dir.path().join("out.csv");
    let run = |args: &[&str]| {
        let o = embloom(args, &[]);
        assert!(!o.status.success());
        stderr(&o)
    };
    let i = input.to_str().unwrap();
    let o = out.to_str().unwrap();
    let e = run(&[
        "grow",
        i,
        "-o",
        o,
        "--method",
        "interpolate",
        "--classes",
        "c9",
    ]);
    assert!(
        e.contains("invalid --classes: no class named 'c9'")
            && e.contains("the classes are: c0, c1, c2")
            && e.contains("repeat --classes"),
        "{e}"
    );
    let e = run(&[
        "grow",
        i,
        "-o",
        o,
        "--method",
        "extrapolate",
        "--magnitude",
        "0",
    ]);
    assert!(
        e.contains("invalid --magnitude: extrapolate needs λ > 0"),
        "{e}"
    );
    let e = run(&[
        "grow",
        i,
        "-o",
        o,
        "--method",
        "interpolate",
        "--neighbours",
        "0",
    ]);
    assert!(
        e.contains("invalid --neighbours: K must be at least 1"),
        "{e}"
    );
    let e = run(&["assess", i, "--repeats", "0"]);
    assert!(e.contains("invalid --repeats: must be at least 1"), "{e}");
    let e = run(&["assess", i, "--knn-k", "0"]);
    assert!(e.contains("invalid --knn-k:"), "{e}");
    assert!(!out.exists());
}
