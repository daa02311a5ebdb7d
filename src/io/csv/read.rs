//! The streaming reader: one record at a time from the `csv` crate into the matrix, the
//! label codes and the role columns, so the file's text is never held whole (a table of
//! short numbers would otherwise cost tens of bytes per cell as parsed strings).

use std::collections::HashMap;
use std::io::{Read, Seek, SeekFrom};
use std::path::Path;

use ndarray::Array2;

use super::super::ReadOptions;
use super::super::assemble::{Parts, Stored};
use super::source::TableSource;
use super::table::{self, Columns, Role};
use crate::data::{FloatType, RawLabels};
use crate::error::{Error, Result};

/// Rows read before the memory check, to learn the table's bytes per row.
const SAMPLE_ROWS: usize = 1024;

fn missing(path: &Path, line: u64, row: usize, col: &str) -> Error {
    Error::input_at(
        path,
        format!("line {line}, column '{col}' (row {row})"),
        "missing value",
        "fill in the value or remove the row",
    )
}

fn csv_error(path: &Path, e: csv::Error) -> Error {
    let line = e.position().map(|p| p.line()).unwrap_or(0);
    match e.into_kind() {
        csv::ErrorKind::Io(io) => Error::io(path, io),
        other => Error::input_at(
            path,
            format!("line {line}"),
            format!("the table cannot be parsed: {other:?}"),
            "write the table as RFC 4180 CSV",
        ),
    }
}

/// Whether the bytes from `start` to the end of the file hold an odd number of quotes: the
/// `csv` crate reads an unclosed quoted field to the end of the file without complaint.
fn unclosed_quote(path: &Path, start: u64) -> Result<bool> {
    let mut f = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
    f.seek(SeekFrom::Start(start))
        .map_err(|e| Error::io(path, e))?;
    let mut buf = [0u8; 1 << 16];
    let mut quotes = 0usize;
    loop {
        let n = f.read(&mut buf).map_err(|e| Error::io(path, e))?;
        if n == 0 {
            break;
        }
        quotes += buf[..n].iter().filter(|&&b| b == b'"').count();
    }
    Ok(quotes % 2 == 1)
}

fn never_closed(path: &Path, line: u64) -> Error {
    Error::input_at(
        path,
        format!("line {line}"),
        "a quoted field is never closed",
        "close the quote (a literal quote inside a quoted field is written \"\")",
    )
}

/// A field as UTF-8 text, trimmed.
fn text<'a>(path: &Path, line: u64, field: &'a [u8]) -> Result<&'a str> {
    std::str::from_utf8(field).map(str::trim).map_err(|_| {
        Error::input_at(
            path,
            format!("line {line}"),
            "the file is not valid UTF-8",
            "save the table as UTF-8",
        )
    })
}

/// Class names interned as they are read: one code per row and each name stored once.
#[derive(Default)]
struct Interner {
    index: HashMap<String, u32>,
    names: Vec<String>,
    codes: Vec<u32>,
}

impl Interner {
    fn push(&mut self, name: &str) {
        let code = match self.index.get(name) {
            Some(&c) => c,
            None => {
                let c = self.names.len() as u32;
                self.index.insert(name.to_string(), c);
                self.names.push(name.to_string());
                c
            }
        };
        self.codes.push(code);
    }
}

/// Refuses, before the bulk of the table is read, a table whose matrix and row bookkeeping
/// would not fit: the rows are estimated from the file size and the bytes per row so far.
fn check_memory(
    path: &Path,
    opts: &ReadOptions,
    file_len: u64,
    body_start: u64,
    pos: u64,
    rows: usize,
    dims: usize,
) -> Result<usize> {
    if rows == 0 {
        return Ok(0);
    }
    let per_row = ((pos.saturating_sub(body_start)) as f64 / rows as f64).max(1.0);
    let est_rows = (file_len.saturating_sub(body_start) as f64 / per_row).ceil() as usize;
    let est = crate::memory::for_read(path, est_rows, dims, FloatType::F32);
    crate::memory::check(
        &est,
        opts.max_memory,
        &format!(
            "reading {} (about {est_rows} rows × {dims} features)",
            path.display()
        ),
        "convert the table to .npz or .safetensors (read without parsing text), split it, or free memory",
    )?;
    Ok(est_rows)
}

/// Reads the pieces of a dataset from a CSV (`,`) or TSV (tab) file.
pub fn read(path: &Path, sep: u8, opts: &ReadOptions) -> Result<(Parts, Stored)> {
    let file_len = std::fs::metadata(path)
        .map_err(|e| Error::io(path, e))?
        .len();
    let mut reader = csv::ReaderBuilder::new()
        .delimiter(sep)
        .has_headers(false)
        .flexible(true)
        .from_path(path)
        .map_err(|e| csv_error(path, e))?;
    let mut record = csv::ByteRecord::new();
    if !reader
        .read_byte_record(&mut record)
        .map_err(|e| csv_error(path, e))?
    {
        return Err(Error::input(
            path,
            "the file is empty",
            "give a table with a header row",
        ));
    }
    let header_line = record.position().map_or(1, |p| p.line());
    let mut names = Vec::with_capacity(record.len());
    for (i, f) in record.iter().enumerate() {
        let f = if i == 0 {
            f.strip_prefix(b"\xef\xbb\xbf").unwrap_or(f)
        } else {
            f
        };
        names.push(text(path, header_line, f)?.to_string());
    }
    if record.len() == 1 && names[0].is_empty() {
        return Err(Error::input(
            path,
            "the file is empty",
            "give a table with a header row",
        ));
    }
    let cols: Columns = table::resolve(path, &format!("line {header_line}"), names, opts)?;
    let dims = cols.dims();
    let width = cols.names.len();
    let body_start = reader.position().byte();
    let mut feats: Vec<f32> = Vec::new();
    let mut labels = Interner::default();
    let mut lines: Vec<usize> = Vec::new();
    // Where each row starts, so a table written from the rows can copy their text (see
    // `source.rs`).
    let mut starts: Vec<u64> = Vec::new();
    let mut ids = cols.has(Role::Id).then(Vec::new);
    let mut groups = cols.has(Role::Group).then(Vec::new);
    let mut folds = cols.has(Role::Fold).then(Vec::new);
    let mut parent_refs = cols.has(Role::ParentRef).then(Vec::new);
    let is_export = cols.is_export;
    let mut origin = is_export.then(Vec::new);
    let (mut parent, mut partner) = (is_export.then(Vec::new), is_export.then(Vec::new));
    let mut last_start = body_start;
    let mut line = header_line;
    loop {
        if lines.len() == SAMPLE_ROWS {
            let est = check_memory(
                path,
                opts,
                file_len,
                body_start,
                reader.position().byte(),
                lines.len(),
                dims,
            )?;
            feats.reserve(est.saturating_sub(lines.len()).saturating_mul(dims));
        }
        if !reader
            .read_byte_record(&mut record)
            .map_err(|e| csv_error(path, e))?
        {
            break;
        }
        let row = lines.len();
        let pos = record.position().cloned();
        line = pos.as_ref().map_or(line + 1, |p| p.line());
        last_start = pos.map_or(last_start, |p| p.byte());
        starts.push(last_start);
        if record.len() != width {
            if reader.position().byte() >= file_len && unclosed_quote(path, last_start)? {
                return Err(never_closed(path, line));
            }
            return Err(Error::input_at(
                path,
                format!("line {line}"),
                format!("{} fields where the header has {width}", record.len()),
                "give every row one field per header column",
            ));
        }
        for ((raw, role), name) in record.iter().zip(&cols.roles).zip(&cols.names) {
            if *role == Role::Ignored {
                continue;
            }
            let v = text(path, line, raw)?;
            // An export leaves the group of synthetic rows empty (they belong to no group).
            let may_be_empty = *role == Role::Provenance || (is_export && *role == Role::Group);
            if v.is_empty() && !may_be_empty {
                return Err(missing(path, line, row, name));
            }
            match role {
                Role::Feature => feats.push(v.parse::<f32>().map_err(|_| {
                    Error::input_at(
                        path,
                        format!("line {line}, column '{name}' (row {row})"),
                        format!("'{v}' is not a number, and column '{name}' has no role, so it is read as a feature"),
                        format!(
                            "fix the value, or mark '{name}' as ignored (`ignore_columns`), or name it as the label, id or group column if it is one"
                        ),
                    )
                })?),
                Role::Label => labels.push(v),
                Role::Id => ids.iter_mut().for_each(|i| i.push(v.to_string())),
                Role::Group => groups.iter_mut().for_each(|g| g.push(v.to_string())),
                Role::Fold => {
                    let f = v.parse::<i64>().map_err(|_| {
                        Error::input_at(
                            path,
                            format!("line {line}, column '{name}' (row {row})"),
                            format!("fold '{v}' is not an integer"),
                            "store folds as integers",
                        )
                    })?;
                    folds.iter_mut().for_each(|x| x.push(f));
                }
                Role::Provenance if name == "origin" => {
                    origin.iter_mut().for_each(|o| o.push(v.to_string()))
                }
                Role::Provenance if name == "parent" || name == "partner" => {
                    // An empty index names no row (as −1 does); a synthetic row without a
                    // parent is refused where the parent is used.
                    let i = if v.is_empty() {
                        -1
                    } else {
                        v.parse::<i64>().map_err(|_| {
                            Error::input_at(
                                path,
                                format!("line {line}, column '{name}' (row {row})"),
                                format!("'{v}' is not a row index"),
                                "store provenance indices as integers (-1 for none)",
                            )
                        })?
                    };
                    let column = if name == "parent" {
                        &mut parent
                    } else {
                        &mut partner
                    };
                    column.iter_mut().for_each(|c| c.push(i));
                }
                Role::ParentRef => parent_refs.iter_mut().for_each(|p| p.push(v.to_string())),
                Role::Provenance | Role::Ignored => {}
            }
        }
        lines.push(line as usize);
    }
    if lines.len() < SAMPLE_ROWS {
        check_memory(
            path,
            opts,
            file_len,
            body_start,
            reader.position().byte(),
            lines.len(),
            dims,
        )?;
    }
    if !lines.is_empty() && unclosed_quote(path, last_start)? {
        return Err(never_closed(path, line));
    }
    let x = Array2::from_shape_vec((lines.len(), dims), feats).map_err(|e| {
        Error::input(
            path,
            format!("feature count disagrees with rows: {e}"),
            "rewrite the table",
        )
    })?;
    let label_name = cols.name_of(Role::Label).unwrap_or("label").to_string();
    let column = |role: Role| format!("column '{}'", cols.name_of(role).unwrap_or_default());
    let parts = Parts {
        x,
        stored_dtype: "text".into(),
        x_source: "feature columns".into(),
        labels: RawLabels::Coded {
            codes: labels.codes,
            names: labels.names,
        },
        labels_source: format!("column '{label_name}'"),
        ids: ids.map(|v| (column(Role::Id), v)),
        groups: groups.map(|v| (column(Role::Group), v)),
        folds: folds.map(|v| (column(Role::Fold), v)),
        row_lines: Some(lines),
        origin,
        parent,
        partner,
        parent_refs: parent_refs.map(|v| (column(Role::ParentRef), v)),
    };
    // Ids and groups that are all integers (as written by `i64`'s own formatting, so `007`
    // stays text) are integers in every output, as they are from the binary formats.
    let integers = |v: &Option<(String, Vec<String>)>| {
        v.as_ref().is_some_and(|(_, v)| {
            v.iter()
                .all(|s| s.parse::<i64>().is_ok_and(|i| i.to_string() == *s))
        })
    };
    let stored = Stored {
        int_ids: integers(&parts.ids),
        int_groups: integers(&parts.groups),
        table: Some(std::sync::Arc::new(TableSource::new(
            path,
            sep,
            cols.names,
            cols.roles,
            starts,
            reader.position().byte(),
        )?)),
        notes: cols.notes,
        ..Stored::default()
    };
    Ok((parts, stored))
}
