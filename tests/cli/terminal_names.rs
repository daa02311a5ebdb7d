//! Class names from user files reach the terminal escaped and cut: no panic on a name of
//! 70,000 characters, no ESC/CR/backspace/newline passed through to drive the terminal.
//! (ECMA-48 control characters; expected behaviour common practice, no source.)

use crate::common;

use common::{embloom, stderr, stdout};

fn names_csv(path: &std::path::Path, names: &[String]) {
    let mut s = String::from("label,f0,f1\n");
    for (c, n) in names.iter().enumerate() {
        let q = n.replace('"', "\"\"");
        for r in 0..6 {
            s += &format!(
                "\"{q}\",{},{}\n",
                c as f32 + 0.1 * r as f32,
                (r * c) as f32 * 0.05
            );
        }
    }
    std::fs::write(path, s).unwrap();
}

#[test]
fn long_and_hostile_names_are_shown_safely() {
    let dir = common::tempdir();
    let input = dir.path().join("names.csv");
    let names = vec![
        "x".repeat(70_000),
        "\u{1b}[2J\u{1b}[31mred\r\u{8}".to_string(),
        "two\nlines".to_string(),
    ];
    names_csv(&input, &names);
    let o = embloom(&["inspect", input.to_str().unwrap()], &[]);
    assert!(o.status.success(), "{}", stderr(&o));
    let out = stdout(&o);
    for c in ['\u{1b}', '\r', '\u{8}'] {
        assert!(!out.contains(c), "raw control character {c:?} printed");
    }
    assert!(
        out.contains("\\e[2J") && out.contains("two\\nlines"),
        "{out}"
    );
    assert!(
        out.lines().all(|l| l.chars().count() < 200),
        "a line is too long"
    );

    let grown = dir.path().join("g.npz");
    let o = embloom(
        &[
            "grow",
            input.to_str().unwrap(),
            "--method",
            "interpolate",
            "--target",
            "x2",
            "-o",
            grown.to_str().unwrap(),
        ],
        &[],
    );
    let all = stdout(&o) + &stderr(&o);
    assert!(o.status.success(), "{all}");
    assert!(
        !all.contains("panicked") && !all.contains('\u{1b}'),
        "{all}"
    );
    assert!(grown.is_file());
}
