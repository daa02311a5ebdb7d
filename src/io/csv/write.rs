//! The table writer. From a table input, the output keeps the input's columns in their order
//! under their names, copies each real row's text from the input (byte for byte when the
//! separator is the same; cell by cell when it differs, or when the input's own provenance
//! columns, from an earlier grow, are left out), and appends `source_row` and the provenance
//! columns. Synthetic rows fill the same columns: the label, the features as the shortest
//! text that reads back to the value in the input's float type, the id, group and fold as
//! the set holds them, and empty cells in ignored columns. From any other input the columns
//! are id, label, group, fold, source_row, `f0`.. `f{d-1}`, then provenance.
//!
//! A field is quoted only when it holds the separator, a quote or a line break (RFC 4180, as
//! the `csv` crate's writer does), with quotes inside doubled.

use std::io::Write;
use std::path::Path;

use super::source::TableSource;
use super::table::Role;
use crate::error::{Error, Result};
use crate::io::export::{APPENDED, Column, Export, PARTNER_LABEL, is_provenance};

/// The table column name of an export key.
fn heading(key: &str) -> &str {
    match key {
        "ids" => "id",
        "labels" => "label",
        "groups" => "group",
        k => k,
    }
}

/// One output line, built field by field.
struct Line {
    buf: Vec<u8>,
    sep: u8,
    empty: bool,
}

impl Line {
    fn new(sep: u8) -> Line {
        Line {
            buf: Vec::new(),
            sep,
            empty: true,
        }
    }

    fn clear(&mut self) {
        self.buf.clear();
        self.empty = true;
    }

    fn next(&mut self) {
        if !self.empty {
            self.buf.push(self.sep);
        }
        self.empty = false;
    }

    /// Bytes already in table form (a row copied from a table with this separator).
    fn raw(&mut self, bytes: &[u8]) {
        self.next();
        self.buf.extend_from_slice(bytes);
    }

    /// A field's text, quoted when it must be.
    fn field(&mut self, text: &[u8]) {
        self.next();
        let sep = self.sep;
        if text
            .iter()
            .any(|&b| b == sep || b == b'"' || b == b'\n' || b == b'\r')
        {
            self.buf.push(b'"');
            for &b in text {
                if b == b'"' {
                    self.buf.push(b'"');
                }
                self.buf.push(b);
            }
            self.buf.push(b'"');
        } else {
            self.buf.extend_from_slice(text);
        }
    }

    fn finish(&mut self, out: &mut dyn Write) -> std::io::Result<()> {
        self.buf.push(b'\n');
        out.write_all(&self.buf)
    }
}

fn cell(c: &Column, i: usize) -> String {
    match c {
        Column::Int(v) => v[i].to_string(),
        Column::F32(v) => v[i].to_string(),
        Column::Text(v) => v[i].clone(),
    }
}

/// Writes the export as a table with separator `sep` to the file at `tmp`.
pub fn write(tmp: &Path, sep: u8, export: &Export<'_>) -> Result<()> {
    let file = std::fs::OpenOptions::new()
        .write(true)
        .truncate(true)
        .open(tmp)
        .map_err(|e| Error::io(tmp, e))?;
    let mut out = std::io::BufWriter::new(file);
    let io = |e: std::io::Error| Error::io(tmp, e);
    match export.table {
        Some(table) => from_table(&mut out, tmp, sep, export, table)?,
        None => plain(&mut out, sep, export).map_err(io)?,
    }
    out.flush().map_err(io)
}

/// A table from a non-table input: role columns, `f0`.., provenance.
fn plain(out: &mut dyn Write, sep: u8, export: &Export<'_>) -> std::io::Result<()> {
    let (lead, tail): (Vec<_>, Vec<_>) =
        export.columns.iter().partition(|(k, _)| !is_provenance(k));
    let [rows, dims] = export.stored.shape();
    let mut line = Line::new(sep);
    for (k, _) in &lead {
        line.field(heading(k).as_bytes());
    }
    for j in 0..dims {
        line.field(format!("f{j}").as_bytes());
    }
    for (k, _) in &tail {
        line.field(heading(k).as_bytes());
    }
    line.finish(out)?;
    for i in 0..rows {
        line.clear();
        for (_, c) in &lead {
            line.field(cell(c, i).as_bytes());
        }
        for j in 0..dims {
            line.field(export.stored.text(i, j).as_bytes());
        }
        for (_, c) in &tail {
            line.field(cell(c, i).as_bytes());
        }
        line.finish(out)?;
    }
    Ok(())
}

/// A table from a table input: its columns (less any provenance of an earlier grow), its
/// real rows' text, then the appended columns.
fn from_table(
    out: &mut dyn Write,
    tmp: &Path,
    sep: u8,
    export: &Export<'_>,
    table: &TableSource,
) -> Result<()> {
    let io = |e: std::io::Error| Error::io(tmp, e);
    let kept: Vec<usize> = (0..table.names.len())
        .filter(|&k| table.roles[k] != Role::Provenance)
        .collect();
    let verbatim = sep == table.sep && kept.len() == table.names.len();
    let missing = |key: &str| {
        Error::output(
            &table.path,
            format!("the set has no '{key}' values for its rows"),
            "this is a bug in the caller; please report it",
        )
    };
    let get = |key: &str| export.column(key).ok_or_else(|| missing(key));
    // The partner label follows the fixed columns when the set has soft-labelled rows.
    let appended_keys: Vec<&str> = APPENDED
        .iter()
        .copied()
        .chain(export.column(PARTNER_LABEL).map(|_| PARTNER_LABEL))
        .collect();
    let appended = appended_keys
        .iter()
        .map(|k| get(k))
        .collect::<Result<Vec<_>>>()?;
    let source_row = match get(APPENDED[0])? {
        Column::Int(v) => v,
        _ => return Err(missing(APPENDED[0])),
    };
    let role_col = |role: Role| -> Result<Option<&Column>> {
        Ok(match role {
            Role::Label => Some(get("labels")?),
            Role::Id => Some(get("id")?),
            Role::Group => Some(get("group")?),
            Role::Fold => Some(get("fold")?),
            _ => None,
        })
    };
    let mut line = Line::new(sep);
    for &k in &kept {
        line.field(table.names[k].as_bytes());
    }
    for k in &appended_keys {
        line.field(k.as_bytes());
    }
    line.finish(out).map_err(io)?;
    let mut rows = table.reopen()?;
    let [n, _] = export.stored.shape();
    let roles: Vec<(Role, Option<&Column>)> = kept
        .iter()
        .map(|&k| Ok((table.roles[k], role_col(table.roles[k])?)))
        .collect::<Result<_>>()?;
    for (i, &source) in source_row.iter().enumerate().take(n) {
        line.clear();
        if i < export.n_real {
            let r = source as usize;
            if verbatim {
                line.raw(rows.raw(r)?);
            } else {
                let record = rows.fields(r)?;
                for &k in &kept {
                    line.field(&record[k]);
                }
            }
        } else {
            let mut j = 0;
            for (role, col) in &roles {
                match (role, col) {
                    (Role::Feature, _) => {
                        line.field(export.stored.text(i, j).as_bytes());
                        j += 1;
                    }
                    (_, Some(c)) => line.field(cell(c, i).as_bytes()),
                    _ => line.field(b""),
                }
            }
        }
        for c in &appended {
            line.field(cell(c, i).as_bytes());
        }
        line.finish(out).map_err(io)?;
    }
    Ok(())
}
