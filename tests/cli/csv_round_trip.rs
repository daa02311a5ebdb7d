//! CSV in, CSV (or TSV, npz, safetensors) out: the input's header and column order, the real
//! rows' own text, the ignored and id columns carried through, synthetic rows in the same
//! columns. The expected text is the input table written here (common practice, no source:
//! a row embloom did not make must come out as it went in); the synthetic rows' features are
//! checked against Rust's own shortest round-trip float formatting.

use std::io::Read;
use std::path::Path;

use crate::common;

use common::*;

/// Cell texts as they sit in the table (quoted where quoted) and as a parser reads them.
struct Table {
    header: &'static str,
    lines: Vec<String>,
    cells: Vec<Vec<String>>,
}

/// 8 rows of `big`, 4 of `small`; integer ids `who`, an integer `frame` and a free-text
/// `notes` (quotes, commas, empty) to ignore; features spelled in assorted ways.
fn table() -> Table {
    let spell = [
        "1",
        "0.10",
        "1e-3",
        "\"2.5\"",
        "-0.0",
        "3.0000",
        "7E+1",
        "0.333333333333333",
    ];
    let notes = ["plain", "\"has, comma\"", "", "\"say \"\"hi\"\"\"", "x"];
    let unquote = |s: &str| -> String {
        match s.strip_prefix('"').and_then(|s| s.strip_suffix('"')) {
            Some(inner) => inner.replace("\"\"", "\""),
            None => s.to_string(),
        }
    };
    let mut lines = Vec::new();
    let mut cells = Vec::new();
    for i in 0..12 {
        let label = if i < 8 { "big" } else { "small" };
        let shift = if i < 8 { 0.0 } else { 4.0 };
        let row: Vec<String> = vec![
            (i + 1).to_string(),
            (100 + i).to_string(),
            notes[i % notes.len()].to_string(),
            label.to_string(),
            spell[i % spell.len()].to_string(),
            format!("{}", shift + value(i, 1, 3)),
            spell[(i + 3) % spell.len()].to_string(),
        ];
        lines.push(row.join(","));
        cells.push(row.iter().map(|c| unquote(c)).collect());
    }
    Table {
        header: "who,frame,notes,label,a,b,c",
        lines,
        cells,
    }
}

fn write_table(path: &Path, t: &Table, crlf: bool) {
    let end = if crlf { "\r\n" } else { "\n" };
    let bom = if crlf { "\u{feff}" } else { "" };
    let mut s = format!("{bom}{}{end}", t.header);
    for l in &t.lines {
        s += l;
        s += end;
    }
    std::fs::write(path, s).unwrap();
}

fn grow(input: &Path, out: &Path) {
    let o = grow_file(
        input,
        out,
        &[
            "--method",
            "interpolate",
            "--target",
            "largest",
            "--id-column",
            "who",
            "--ignore-columns",
            "frame,notes",
            "--seed",
            "4",
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
}

#[test]
fn csv_to_csv_keeps_header_and_real_rows_text_byte_for_byte() {
    let t = table();
    for crlf in [false, true] {
        let dir = tempdir();
        let input = p(dir.path(), "in.csv");
        write_table(&input, &t, crlf);
        let out = p(dir.path(), "out.csv");
        grow(&input, &out);
        let text = std::fs::read_to_string(&out).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(
            lines[0],
            format!("{},source_row,origin,parent,partner,weight", t.header),
            "crlf {crlf}"
        );
        // Real rows: the input's line, then source_row, origin, parent, partner, weight.
        for (r, want) in t.lines.iter().enumerate() {
            assert_eq!(
                lines[1 + r],
                format!("{want},{r},real,{r},-1,0"),
                "crlf {crlf}"
            );
        }
        // 4 `small` rows grown to the 8 of `big`.
        let synthetic = &lines[1 + t.lines.len()..];
        assert_eq!(synthetic.len(), 4, "{text}");
        for line in synthetic {
            let f: Vec<&str> = line.split(',').collect();
            assert_eq!(f.len(), 12, "{line}");
            // Integer ids: -1 for a synthetic row; ignored columns empty.
            assert_eq!(&f[..4], ["-1", "", "", "small"], "{line}");
            for cell in &f[4..7] {
                let v: f32 = cell.parse().unwrap();
                assert_eq!(v.to_string(), *cell, "shortest f32 text: {line}");
            }
            let parent: usize = f[9].parse().unwrap();
            assert!((8..12).contains(&parent), "{line}");
            assert_eq!(f[7], f[9], "source_row is the parent's: {line}");
            assert_eq!(f[8], "interpolate");
        }
        // The output reads back with the same flags.
        let o = embloom(
            &[
                "inspect",
                out.to_str().unwrap(),
                "--id-column",
                "who",
                "--ignore-columns",
                "frame,notes",
            ],
            &[],
        );
        assert!(o.status.success(), "{}", stderr(&o));
    }
}

#[test]
fn csv_to_tsv_keeps_every_real_cells_text() {
    let t = table();
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_table(&input, &t, false);
    let out = p(dir.path(), "out.tsv");
    grow(&input, &out);
    let mut r = csv::ReaderBuilder::new()
        .delimiter(b'\t')
        .has_headers(false)
        .from_path(&out)
        .unwrap();
    let rows: Vec<csv::StringRecord> = r.records().map(|r| r.unwrap()).collect();
    let header: Vec<&str> = rows[0].iter().collect();
    let mut want: Vec<&str> = t.header.split(',').collect();
    want.extend(["source_row", "origin", "parent", "partner", "weight"]);
    assert_eq!(header, want);
    for (i, cells) in t.cells.iter().enumerate() {
        let got: Vec<&str> = rows[1 + i].iter().take(cells.len()).collect();
        assert_eq!(got, *cells, "row {i}");
    }
    assert_eq!(rows.len(), 1 + 12 + 4);
}

/// The descr and the raw values of member `name` of an npz (a zip of `.npy` files, numpy's
/// format specification: magic, version, header length, a dict literal, the data).
fn npz_member(path: &Path, name: &str) -> (String, Vec<u8>) {
    let mut z = zip::ZipArchive::new(std::fs::File::open(path).unwrap()).unwrap();
    let mut m = z.by_name(&format!("{name}.npy")).unwrap();
    let mut b = Vec::new();
    m.read_to_end(&mut b).unwrap();
    let (len, start) = if b[6] == 1 {
        (u16::from_le_bytes([b[8], b[9]]) as usize, 10)
    } else {
        (u32::from_le_bytes([b[8], b[9], b[10], b[11]]) as usize, 12)
    };
    let header = String::from_utf8_lossy(&b[start..start + len]).to_string();
    let descr = header.split("'descr': '").nth(1).unwrap();
    let descr = descr[..descr.find('\'').unwrap()].to_string();
    (descr, b[start + len..].to_vec())
}

fn ints(b: &[u8]) -> Vec<i64> {
    b.chunks(8)
        .map(|c| i64::from_le_bytes(c.try_into().unwrap()))
        .collect()
}

/// numpy `<U{n}`: n UTF-32 code units per element, NUL-padded.
fn texts(descr: &str, b: &[u8]) -> Vec<String> {
    let n: usize = descr.trim_start_matches("<U").parse().unwrap();
    b.chunks(4 * n)
        .map(|c| {
            c.chunks(4)
                .map(|u| u32::from_le_bytes(u.try_into().unwrap()))
                .take_while(|&u| u != 0)
                .map(|u| char::from_u32(u).unwrap())
                .collect()
        })
        .collect()
}

#[test]
fn ignored_and_id_columns_are_carried_into_npz_and_safetensors() {
    let t = table();
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    write_table(&input, &t, false);
    let real_ids: Vec<i64> = (1..=12).collect();
    let frames: Vec<i64> = (100..112).collect();
    let notes: Vec<String> = t.cells.iter().map(|c| c[2].clone()).collect();

    let npz = p(dir.path(), "out.npz");
    grow(&input, &npz);
    let (descr, b) = npz_member(&npz, "id");
    assert_eq!(descr, "<i8", "integer ids stay integers");
    assert_eq!(ints(&b)[..12], real_ids[..]);
    assert_eq!(ints(&b)[12..], [-1; 4]);
    let (descr, b) = npz_member(&npz, "frame");
    assert_eq!(descr, "<i8", "an integer ignored column stays integer");
    assert_eq!(ints(&b)[..12], frames[..]);
    assert_eq!(ints(&b)[12..], [-1; 4]);
    let (descr, b) = npz_member(&npz, "notes");
    assert!(descr.starts_with("<U"), "text stays text: {descr}");
    let got = texts(&descr, &b);
    assert_eq!(got[..12], notes[..]);
    assert!(got[12..].iter().all(String::is_empty), "{got:?}");

    let st = p(dir.path(), "out.safetensors");
    grow(&input, &st);
    let bytes = std::fs::read(&st).unwrap();
    let f = safetensors::SafeTensors::deserialize(&bytes).unwrap();
    let frame = f.tensor("frame").unwrap();
    assert_eq!(frame.dtype(), safetensors::Dtype::I64);
    assert_eq!(ints(frame.data())[..12], frames[..]);
    let id = f.tensor("id").unwrap();
    assert_eq!(id.dtype(), safetensors::Dtype::I64);
    assert_eq!(ints(id.data())[..12], real_ids[..]);
    // Text as codes into the names in the metadata.
    let (_, meta) = safetensors::SafeTensors::read_metadata(&bytes).unwrap();
    let names: Vec<String> =
        serde_json::from_str(&meta.metadata().as_ref().unwrap()["notes.names"]).unwrap();
    let codes = ints(f.tensor("notes").unwrap().data());
    let decoded: Vec<&str> = codes.iter().map(|&c| names[c as usize].as_str()).collect();
    assert_eq!(
        decoded[..12],
        notes.iter().map(String::as_str).collect::<Vec<_>>()[..]
    );
}

#[test]
fn an_ignored_column_named_like_an_output_key_is_refused() {
    let dir = tempdir();
    let input = p(dir.path(), "in.csv");
    let mut s = String::from("weight,label,a\n");
    for i in 0..8 {
        s += &format!("w{i},c{},{}\n", i % 2, value(i, 0, 2));
    }
    std::fs::write(&input, &s).unwrap();
    for ext in ["csv", "npz"] {
        let out = p(dir.path(), &format!("out.{ext}"));
        let o = grow_file(
            &input,
            &out,
            &[
                "--method",
                "duplicate",
                "--target",
                "x2",
                "--ignore-columns",
                "weight",
            ],
        );
        assert!(!o.status.success(), "{ext}");
        let err = stderr(&o);
        assert!(
            err.contains("column 'weight'") && err.contains("rename"),
            "{err}"
        );
        assert!(!out.exists(), "nothing written for {ext}");
    }
}
