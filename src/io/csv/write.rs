//! The table writer: the header row and one row per embedding, quoted by the `csv` crate
//! (RFC 4180: a field is quoted only when it holds the separator, a quote or a line break).

use std::io::Write;

use super::super::export::{Column, Export, PROVENANCE};

/// The table column name of an export key.
fn heading(key: &str) -> &str {
    match key {
        "ids" => "id",
        "labels" => "label",
        "groups" => "group",
        k => k,
    }
}

fn into_io(e: csv::Error) -> std::io::Error {
    match e.into_kind() {
        csv::ErrorKind::Io(io) => io,
        other => std::io::Error::other(format!("{other:?}")),
    }
}

/// Writes the header row and one row per embedding; features use the shortest text that
/// reads back to the same f32 (Rust's `Display` for floats guarantees the round trip).
pub fn write(out: &mut dyn Write, sep: u8, export: &Export<'_>) -> std::io::Result<()> {
    let (lead, tail): (Vec<_>, Vec<_>) = export
        .columns
        .iter()
        .partition(|(k, _)| !PROVENANCE.contains(k));
    let mut w = csv::WriterBuilder::new().delimiter(sep).from_writer(out);
    let mut head: Vec<String> = lead.iter().map(|(k, _)| heading(k).to_string()).collect();
    head.extend((0..export.x.ncols()).map(|j| format!("f{j}")));
    head.extend(tail.iter().map(|(k, _)| heading(k).to_string()));
    w.write_record(&head).map_err(into_io)?;
    let cell = |c: &Column, i: usize| match c {
        Column::Int(v) => v[i].to_string(),
        Column::F32(v) => v[i].to_string(),
        Column::Text(v) => v[i].clone(),
    };
    let mut fields: Vec<String> = Vec::with_capacity(head.len());
    for (i, row) in export.x.rows().into_iter().enumerate() {
        fields.clear();
        fields.extend(lead.iter().map(|(_, c)| cell(c, i)));
        fields.extend(row.iter().map(|v| v.to_string()));
        fields.extend(tail.iter().map(|(_, c)| cell(c, i)));
        w.write_record(&fields).map_err(into_io)?;
    }
    w.flush()
}
