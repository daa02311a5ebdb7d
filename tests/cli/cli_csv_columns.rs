//! CSV column roles on the command line: --id-column, --group-column, --fold-column and
//! --ignore-columns, the refusal of a text column with no role, and the older `ids`/`groups`
//! headers read with a note. The expected values are the cells of the tables written here
//! (common practice, no source: a role decides only where a column's cells go).

use crate::common;

use common::*;

/// 12 rows of two classes; `who` ids, `team` groups, `split` folds, `notes` free text.
fn table(path: &std::path::Path) {
    let mut s = String::from("who,team,split,notes,label,a,b\n");
    for i in 0..12 {
        let note = if i % 3 == 0 {
            "\"has, comma\""
        } else {
            "plain"
        };
        s += &format!(
            "u{i},t{},{},{note},c{},{},{}\n",
            i % 4,
            i % 2,
            i % 2,
            value(i, 0, 9) + (i % 2) as f32,
            value(i, 1, 9)
        );
    }
    std::fs::write(path, s).unwrap();
}

fn inspect_json(args: &[&str]) -> serde_json::Value {
    let mut all = vec!["inspect", "--json"];
    all.extend_from_slice(args);
    let o = embloom(&all, &[]);
    assert!(o.status.success(), "{}", stderr(&o));
    serde_json::from_str(&stdout(&o)).expect("inspect --json prints JSON")
}

#[test]
fn each_role_flag_gives_its_column_a_role() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    table(&input);
    let f = input.to_str().unwrap();
    let j = inspect_json(&[
        f,
        "--id-column",
        "who",
        "--group-column",
        "team",
        "--fold-column",
        "split",
        "--ignore-columns",
        "notes",
    ]);
    assert_eq!(j["dims"], 2, "{j}");
    assert_eq!(j["has_ids"], true);
    assert_eq!(j["has_groups"], true);
    assert_eq!(j["has_folds"], true);
    // The same without the fold role: split is then a numeric feature.
    let j = inspect_json(&[
        f,
        "--id-column",
        "who",
        "--group-column",
        "team",
        "--ignore-columns",
        "notes",
    ]);
    assert_eq!(
        (j["dims"].as_u64(), j["has_folds"].as_bool()),
        (Some(3), Some(false))
    );
    // Ignoring two columns at once, comma-separated.
    let j = inspect_json(&[
        f,
        "--ignore-columns",
        "notes,who,team",
        "--fold-column",
        "split",
    ]);
    assert_eq!(
        (j["dims"].as_u64(), j["has_ids"].as_bool()),
        (Some(2), Some(false))
    );
}

#[test]
fn a_text_column_with_no_role_is_refused_with_the_ignore_flag() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    table(&input);
    let o = embloom(
        &[
            "inspect",
            input.to_str().unwrap(),
            "--id-column",
            "who",
            "--group-column",
            "team",
        ],
        &[],
    );
    assert!(!o.status.success());
    let err = stderr(&o);
    // 'notes' holds text in every row; the first data row is line 2, row 0.
    for want in [
        "in.csv",
        "column 'notes'",
        "line 2",
        "row 0",
        "--ignore-columns",
    ] {
        assert!(err.contains(want), "{want} in {err}");
    }
}

#[test]
fn older_ids_and_groups_headers_are_read_with_a_note() {
    let dir = tempdir();
    let input = p(dir.path(), "old.csv");
    let mut s = String::from("ids,groups,label,a\n");
    for i in 0..10 {
        s += &format!("r{i},g{},c{},{}\n", i % 3, i % 2, value(i, 0, 4));
    }
    std::fs::write(&input, s).unwrap();
    let out = p(dir.path(), "out.csv");
    let o = grow_file(&input, &out, &["--method", "duplicate", "--target", "x2"]);
    let err = stderr(&o);
    assert!(o.status.success(), "{err}");
    assert!(err.contains("'ids'") && err.contains("'groups'"), "{err}");
}
