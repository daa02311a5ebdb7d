//! CSV column roles through the library: id, group, fold and ignored columns by name, the
//! older `ids`/`groups` headers with a note, and the refusal of an unroled text column.
//! The expected values are the cells of the small tables written here (common practice, no
//! source: a column's role decides only where its cells go).

use std::fs;

use embloom::io::{ReadOptions, read};
use tempfile::TempDir;

const TABLE: &str = "name,who,team,split,notes,label,a,b\n\
    r0,u1,t1,0,free text,x,1,2\n\
    r1,u2,t1,1,\"more, text\",y,3,4\n\
    r2,u3,t2,0,,x,5,6\n\
    r3,u4,t2,1,last,y,7,8\n";

fn write(dir: &TempDir, name: &str, text: &str) -> std::path::PathBuf {
    let p = dir.path().join(name);
    fs::write(&p, text).unwrap();
    p
}

#[test]
fn role_columns_by_name_and_ignored_columns_are_not_features() {
    let dir = TempDir::new().unwrap();
    let p = write(&dir, "roles.csv", TABLE);
    let opts = ReadOptions {
        id_column: Some("who".into()),
        group_column: Some("team".into()),
        fold_column: Some("split".into()),
        ignore_columns: vec!["name".into(), "notes".into()],
        ..ReadOptions::default()
    };
    let ds = read(&p, &opts).unwrap().dataset;
    assert_eq!(ds.dims(), 2, "only a and b are features");
    assert_eq!(ds.x.row(2).to_vec(), vec![5.0, 6.0]);
    assert_eq!(ds.ids.as_deref().unwrap(), ["u1", "u2", "u3", "u4"]);
    assert_eq!(ds.groups.as_deref().unwrap(), ["t1", "t1", "t2", "t2"]);
    assert_eq!(ds.folds.as_deref().unwrap(), [0, 1, 0, 1]);
    assert_eq!(ds.classes, ["x", "y"]);
    assert_eq!(ds.labels, [0, 1, 0, 1]);
}

#[test]
fn an_unroled_text_column_is_refused_naming_file_column_and_row() {
    let dir = TempDir::new().unwrap();
    let p = write(&dir, "text.csv", TABLE);
    let opts = ReadOptions {
        ignore_columns: vec!["notes".into()],
        ..ReadOptions::default()
    };
    let msg = read(&p, &opts).unwrap_err().to_string();
    // 'name' is the first column and the first row's cell is 'r0' (line 2, row 0).
    for want in [
        "text.csv",
        "column 'name'",
        "line 2",
        "row 0",
        "'r0' is not a number",
        "ignore",
    ] {
        assert!(msg.contains(want), "{want} in {msg}");
    }
    // A named role column that is not in the header is refused with the columns present.
    let opts = ReadOptions {
        id_column: Some("nope".into()),
        ..ReadOptions::default()
    };
    let msg = read(&p, &opts).unwrap_err().to_string();
    assert!(
        msg.contains("no id column 'nope'") && msg.contains("who"),
        "{msg}"
    );
}

#[test]
fn older_ids_and_groups_headers_are_read_with_a_note() {
    let dir = TempDir::new().unwrap();
    let p = write(
        &dir,
        "old.csv",
        "ids,groups,label,a\nr0,g0,x,1\nr1,g1,y,2\n",
    );
    let l = read(&p, &ReadOptions::default()).unwrap();
    assert_eq!(l.dataset.dims(), 1);
    assert_eq!(l.dataset.ids.as_deref().unwrap(), ["r0", "r1"]);
    assert_eq!(l.dataset.groups.as_deref().unwrap(), ["g0", "g1"]);
    assert_eq!(l.notes.len(), 2, "{:?}", l.notes);
    assert!(l.notes.iter().any(|n| n.contains("'ids'")), "{:?}", l.notes);
    assert!(
        l.notes.iter().any(|n| n.contains("'groups'")),
        "{:?}",
        l.notes
    );
    // The current names need no note.
    let p = write(&dir, "new.csv", "id,group,label,a\nr0,g0,x,1\nr1,g1,y,2\n");
    assert!(read(&p, &ReadOptions::default()).unwrap().notes.is_empty());
}

#[test]
fn a_memory_limit_below_the_estimate_refuses_the_table_before_reading_it() {
    let dir = TempDir::new().unwrap();
    let mut text = String::from("label,a,b\n");
    for i in 0..5000 {
        text += &format!("c{},{i},{}\n", i % 2, i * 2);
    }
    let p = write(&dir, "big.csv", &text);
    let opts = ReadOptions {
        max_memory: Some(1 << 20),
        ..ReadOptions::default()
    };
    match read(&p, &opts).unwrap_err() {
        e @ embloom::Error::Resource { .. } => {
            let msg = e.to_string();
            assert!(
                msg.contains("reading") && msg.contains("big.csv") && msg.contains("rows"),
                "{msg}"
            );
        }
        other => panic!("not a resource error: {other}"),
    }
}

#[test]
fn plural_fold_spelling_is_read_with_a_note_in_csv_and_npz() {
    // `folds` is read as the fold role when no `fold` is present, as `ids`/`groups` are;
    // the expected folds are the cells written here (common practice, no source).
    let dir = TempDir::new().unwrap();
    let p = write(&dir, "plural.csv", "folds,label,a\n0,x,1\n1,y,2\n0,x,3\n");
    let l = read(&p, &ReadOptions::default()).unwrap();
    assert_eq!(l.dataset.dims(), 1, "folds is not a feature");
    assert_eq!(l.dataset.folds.as_deref(), Some(&[0, 1, 0][..]));
    assert!(
        l.notes
            .iter()
            .any(|n| n.contains("'folds'") && n.contains("'fold'")),
        "{:?}",
        l.notes
    );
    let npz = dir.path().join("plural.npz");
    let f32s: Vec<u8> = [1.0f32, 2.0, 3.0]
        .iter()
        .flat_map(|v| v.to_le_bytes())
        .collect();
    let i64s = |v: &[i64]| -> Vec<u8> { v.iter().flat_map(|x| x.to_le_bytes()).collect() };
    crate::common::write_npz(
        &npz,
        &[
            (
                "embeddings",
                crate::common::npy_bytes("<f4", &[3, 1], &f32s),
            ),
            (
                "labels",
                crate::common::npy_bytes("<i8", &[3], &i64s(&[0, 1, 0])),
            ),
            (
                "folds",
                crate::common::npy_bytes("<i8", &[3], &i64s(&[1, 0, 1])),
            ),
        ],
    );
    let l = read(&npz, &ReadOptions::default()).unwrap();
    assert_eq!(l.dataset.folds.as_deref(), Some(&[1, 0, 1][..]));
    assert!(
        l.notes.iter().any(|n| n.contains("'folds'")),
        "{:?}",
        l.notes
    );
    // A fold key the caller names is read as named, without a note.
    let opts = ReadOptions {
        fold_key: "folds".into(),
        ..ReadOptions::default()
    };
    for path in [&p, &npz] {
        let l = read(path, &opts).unwrap();
        assert!(
            l.dataset.folds.is_some() && l.notes.is_empty(),
            "{:?}",
            l.notes
        );
    }
}
