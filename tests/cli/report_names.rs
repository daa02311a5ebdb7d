//! Class names that a spreadsheet would run as formulas, and empty class names.
//! Expected behaviour: OWASP "CSV Injection" leading-quote defence for report CSVs (from
//! memory); the data export keeps names exact; an empty name is refused on input (common
//! practice, no source).

use crate::common;

use common::{assess_file, embloom, stderr};

fn names_csv(path: &std::path::Path, names: &[&str]) {
    let mut s = String::from("label,f0,f1\n");
    for (c, n) in names.iter().enumerate() {
        let q = n.replace('"', "\"\"");
        for r in 0..8 {
            s += &format!(
                "\"{q}\",{},{}\n",
                c as f32 * 3.0 + 0.1 * r as f32,
                (r % 3) as f32 * 0.05
            );
        }
    }
    std::fs::write(path, s).unwrap();
}

const FORMULAS: [&str; 4] = ["=HYPERLINK(\"http://x\")", "+1+2", "-3+4", "@SUM(A1)"];

#[test]
fn report_csvs_neutralise_formula_names_and_the_export_keeps_them() {
    let dir = common::tempdir();
    let input = dir.path().join("f.csv");
    let mut names = FORMULAS.to_vec();
    names.push("plain");
    names_csv(&input, &names);
    let report = dir.path().join("rep");
    let o = assess_file(
        &input,
        &[
            "--folds",
            "2",
            "--probes",
            "knn",
            "--report",
            report.to_str().unwrap(),
            "--quiet",
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let per_class = std::fs::read_to_string(report.join("per_class.csv")).unwrap();
    for f in FORMULAS {
        let quoted = format!("'{f}");
        // The first field with a quote inside is itself quoted (RFC 4180).
        let cell = if f.contains([',', '"']) {
            format!("\"{}\"", quoted.replace('"', "\"\""))
        } else {
            quoted
        };
        assert!(
            per_class.contains(&format!(",{cell},")),
            "{f} not neutralised:\n{per_class}"
        );
    }
    for line in per_class.lines().skip(1) {
        let third = line.split(',').nth(2).unwrap();
        assert!(
            !third.starts_with(['=', '+', '-', '@']),
            "formula cell left: {line}"
        );
    }
    assert!(per_class.contains(",plain,"));

    let out = dir.path().join("g.csv");
    let o = embloom(
        &[
            "grow",
            input.to_str().unwrap(),
            "--method",
            "interpolate",
            "--target",
            "x2",
            "-o",
            out.to_str().unwrap(),
        ],
        &[],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let exported = std::fs::read_to_string(&out).unwrap();
    assert!(exported.contains("+1+2") && !exported.contains("'+1+2"));
    assert!(exported.contains("@SUM(A1)") && !exported.contains("'@SUM"));
}
