//! CSV and TSV tables: a header row, one row per embedding. The label column is named by
//! option; `id`, `group` and the fold column ride along; every other column is a numeric
//! feature. Quoting follows RFC 4180 (quoted fields, doubled quotes, embedded separators and
//! line breaks); CRLF line ends and a UTF-8 byte-order mark are accepted.

use std::collections::HashMap;
use std::io::Write;
use std::path::Path;

use ndarray::Array2;

use super::ReadOptions;
use super::assemble::Parts;
use super::export::{Column, Export, PROVENANCE};
use crate::data::RawLabels;
use crate::error::{Error, Result};

/// One parsed record and the 1-based line it starts on.
struct Record {
    line: usize,
    fields: Vec<String>,
}

/// Splits `text` into records (RFC 4180). Blank lines are skipped.
fn records(text: &str, sep: char, path: &Path) -> Result<Vec<Record>> {
    let mut out = Vec::new();
    let mut chars = text.chars().peekable();
    let mut line = 1usize;
    let mut start_line = 1usize;
    let mut fields: Vec<String> = Vec::new();
    let mut field = String::new();
    let mut quoted_field = false;
    let mut at_field_start = true;
    let end_record = |fields: &mut Vec<String>,
                      field: &mut String,
                      quoted: bool,
                      start: usize,
                      out: &mut Vec<Record>| {
        let f = std::mem::take(field);
        if fields.is_empty() && f.is_empty() && !quoted {
            return; // blank line
        }
        fields.push(f);
        out.push(Record {
            line: start,
            fields: std::mem::take(fields),
        });
    };
    while let Some(c) = chars.next() {
        if at_field_start && c == '"' {
            quoted_field = true;
            at_field_start = false;
            loop {
                match chars.next() {
                    Some('"') if chars.peek() == Some(&'"') => {
                        chars.next();
                        field.push('"');
                    }
                    Some('"') => break,
                    Some(ch) => {
                        if ch == '\n' {
                            line += 1;
                        }
                        field.push(ch);
                    }
                    None => {
                        return Err(Error::input_at(
                            path,
                            format!("line {start_line}"),
                            "a quoted field is never closed",
                            "close the quote (a literal quote inside a quoted field is written \"\")",
                        ));
                    }
                }
            }
            match chars.peek() {
                None | Some('\n') | Some('\r') => {}
                Some(&ch) if ch == sep => {}
                Some(&ch) => {
                    return Err(Error::input_at(
                        path,
                        format!("line {line}"),
                        format!("unexpected '{ch}' after a closing quote"),
                        "quote the whole field, and double any quote inside it",
                    ));
                }
            }
            continue;
        }
        if c == sep {
            fields.push(std::mem::take(&mut field));
            at_field_start = true;
            quoted_field = false;
        } else if c == '\n' || c == '\r' {
            if c == '\r' && chars.peek() == Some(&'\n') {
                chars.next();
            }
            end_record(&mut fields, &mut field, quoted_field, start_line, &mut out);
            line += 1;
            start_line = line;
            at_field_start = true;
            quoted_field = false;
        } else if c == '"' {
            return Err(Error::input_at(
                path,
                format!("line {line}"),
                "a quote inside an unquoted field",
                "quote the whole field and double the quote inside it (\"\")",
            ));
        } else {
            field.push(c);
            at_field_start = false;
        }
    }
    if !fields.is_empty() || !field.is_empty() || quoted_field {
        end_record(&mut fields, &mut field, quoted_field, start_line, &mut out);
    }
    Ok(out)
}

/// What a column is used for.
#[derive(Clone, Copy, PartialEq)]
enum Role {
    Label,
    Id,
    Group,
    Fold,
    Feature,
    /// Provenance written by embloom itself; skipped on reading.
    Provenance,
    /// The parent of each row of an external set, as text (see `ReadOptions::parent_key`).
    ParentRef,
}

fn missing(path: &Path, line: usize, col: &str) -> Error {
    Error::input_at(
        path,
        format!("line {line}, column '{col}'"),
        "missing value",
        "fill in the value or remove the row",
    )
}

/// Reads the pieces of a dataset from a CSV (`,`) or TSV (tab) file.
pub fn read(path: &Path, sep: char, opts: &ReadOptions) -> Result<Parts> {
    let bytes = std::fs::read(path).map_err(|e| Error::io(path, e))?;
    let text = String::from_utf8(bytes).map_err(|e| {
        // Count lines before the bad byte so the user can find it.
        let at = e.utf8_error().valid_up_to();
        let line = 1 + e.as_bytes()[..at].iter().filter(|&&b| b == b'\n').count();
        Error::input_at(
            path,
            format!("line {line}"),
            "the file is not valid UTF-8",
            "save the table as UTF-8",
        )
    })?;
    let text = text.strip_prefix('\u{feff}').unwrap_or(&text);
    let mut recs = records(text, sep, path)?.into_iter();
    let header = recs
        .next()
        .ok_or_else(|| Error::input(path, "the file is empty", "give a table with a header row"))?;
    let names: Vec<String> = header.fields.iter().map(|f| f.trim().to_string()).collect();
    let mut seen: HashMap<&str, usize> = HashMap::new();
    for (i, n) in names.iter().enumerate() {
        if n.is_empty() {
            return Err(Error::input_at(
                path,
                format!("line {}, column {}", header.line, i + 1),
                "a column has no name (often a pandas index written by to_csv)",
                "name every column, or write the table with index=False",
            ));
        }
        if let Some(first) = seen.insert(n, i) {
            return Err(Error::input_at(
                path,
                format!("line {}, column '{n}'", header.line),
                format!(
                    "column name '{n}' appears twice (columns {} and {})",
                    first + 1,
                    i + 1
                ),
                "give every column a distinct name",
            ));
        }
    }
    if !seen.contains_key(opts.label_column.as_str()) {
        return Err(Error::input_at(
            path,
            format!("line {}, column '{}'", header.line, opts.label_column),
            format!(
                "no label column '{}'; columns present: {}",
                opts.label_column,
                names.join(", ")
            ),
            "pass `label_column` with the name of the label column",
        ));
    }
    if let Some(key) = opts.parent_key.as_deref()
        && !seen.contains_key(key)
    {
        return Err(Error::input_at(
            path,
            format!("line {}", header.line),
            format!(
                "no column '{key}' naming each row's parent; columns present: {}",
                names.join(", ")
            ),
            format!(
                "add a '{key}' column holding the id (or row index) of the real row each row was made from"
            ),
        ));
    }
    // An embloom export carries all four provenance columns; they are not features.
    let is_export = PROVENANCE.iter().all(|p| seen.contains_key(p));
    let roles: Vec<Role> = names
        .iter()
        .map(|n| match n.as_str() {
            n if n == opts.label_column => Role::Label,
            n if opts.parent_key.as_deref() == Some(n) => Role::ParentRef,
            "id" => Role::Id,
            "group" => Role::Group,
            n if n == opts.fold_key => Role::Fold,
            n if is_export && (PROVENANCE.contains(&n) || n == super::export::SOURCE_ROW) => {
                Role::Provenance
            }
            _ => Role::Feature,
        })
        .collect();
    let dims = roles.iter().filter(|r| **r == Role::Feature).count();
    let (mut feats, mut labels, mut lines) = (Vec::new(), Vec::new(), Vec::new());
    let has = |r: Role| roles.contains(&r);
    let mut ids = has(Role::Id).then(Vec::new);
    let mut groups = has(Role::Group).then(Vec::new);
    let mut folds = has(Role::Fold).then(Vec::new);
    let mut parent_refs = opts
        .parent_key
        .as_ref()
        .map(|k| (format!("column '{k}'"), Vec::new()));
    let mut origin = is_export.then(Vec::new);
    let (mut parent, mut partner) = (is_export.then(Vec::new), is_export.then(Vec::new));
    for rec in recs {
        if rec.fields.len() != names.len() {
            return Err(Error::input_at(
                path,
                format!("line {}", rec.line),
                format!(
                    "{} fields where the header has {}",
                    rec.fields.len(),
                    names.len()
                ),
                "give every row one field per header column",
            ));
        }
        for ((raw, role), name) in rec.fields.iter().zip(&roles).zip(&names) {
            let v = raw.trim();
            // An export leaves the group of synthetic rows empty (they belong to no group).
            let may_be_empty = *role == Role::Provenance || (is_export && *role == Role::Group);
            if v.is_empty() && !may_be_empty {
                return Err(missing(path, rec.line, name));
            }
            match role {
                Role::Feature => feats.push(v.parse::<f32>().map_err(|_| {
                    Error::input_at(
                        path,
                        format!("line {}, column '{name}'", rec.line),
                        format!("'{v}' is not a number"),
                        format!(
                            "fix the value, or pass `label_column` if '{name}' holds the labels"
                        ),
                    )
                })?),
                Role::Label => labels.push(v.to_string()),
                Role::Id => ids.as_mut().into_iter().for_each(|i| i.push(v.to_string())),
                Role::Group => groups
                    .as_mut()
                    .into_iter()
                    .for_each(|g| g.push(v.to_string())),
                Role::Fold => {
                    let f = v.parse::<i64>().map_err(|_| {
                        Error::input_at(
                            path,
                            format!("line {}, column '{name}'", rec.line),
                            format!("fold '{v}' is not an integer"),
                            "store folds as integers",
                        )
                    })?;
                    folds.as_mut().into_iter().for_each(|x| x.push(f));
                }
                Role::Provenance if name == "origin" => origin
                    .as_mut()
                    .into_iter()
                    .for_each(|o| o.push(v.to_string())),
                Role::Provenance if name == "parent" || name == "partner" => {
                    // An empty index names no row (as −1 does); a synthetic row without a
                    // parent is refused where the parent is used.
                    let i = if v.is_empty() {
                        -1
                    } else {
                        v.parse::<i64>().map_err(|_| {
                            Error::input_at(
                                path,
                                format!("line {}, column '{name}'", rec.line),
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
                    column.as_mut().into_iter().for_each(|c| c.push(i));
                }
                Role::Provenance => {}
                Role::ParentRef => parent_refs
                    .as_mut()
                    .into_iter()
                    .for_each(|(_, p)| p.push(v.to_string())),
            }
        }
        lines.push(rec.line);
    }
    let x = Array2::from_shape_vec((lines.len(), dims), feats).map_err(|e| {
        Error::input(
            path,
            format!("feature count disagrees with rows: {e}"),
            "rewrite the table",
        )
    })?;
    Ok(Parts {
        x,
        stored_dtype: "text".into(),
        x_source: "feature columns".into(),
        labels: RawLabels::Text(labels),
        labels_source: format!("column '{}'", opts.label_column),
        ids: ids.map(|v| ("column 'id'".into(), v)),
        groups: groups.map(|v| ("column 'group'".into(), v)),
        folds: folds.map(|v| (format!("column '{}'", opts.fold_key), v)),
        row_lines: Some(lines),
        origin,
        parent,
        partner,
        parent_refs,
    })
}

/// A field, quoted when it holds the separator, a quote, a line break or edge spaces.
fn quote(s: &str, sep: char) -> String {
    let needs = s.contains(sep) || s.contains(['"', '\n', '\r']) || s.trim() != s || s.is_empty();
    if needs {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// The table column name of an export key.
fn heading(key: &str) -> &str {
    match key {
        "ids" => "id",
        "labels" => "label",
        "groups" => "group",
        k => k,
    }
}

/// Writes the header row and one row per embedding; features use the shortest text that
/// reads back to the same f32 (Rust's `Display` for floats guarantees the round trip).
pub fn write(out: &mut dyn Write, sep: char, export: &Export<'_>) -> std::io::Result<()> {
    let (lead, tail): (Vec<_>, Vec<_>) = export
        .columns
        .iter()
        .partition(|(k, _)| !PROVENANCE.contains(k));
    let mut head: Vec<String> = lead.iter().map(|(k, _)| quote(heading(k), sep)).collect();
    head.extend((0..export.x.ncols()).map(|j| format!("f{j}")));
    head.extend(tail.iter().map(|(k, _)| quote(heading(k), sep)));
    let s = sep.to_string();
    writeln!(out, "{}", head.join(&s))?;
    let cell = |c: &Column, i: usize| match c {
        Column::Int(v) => v[i].to_string(),
        Column::F32(v) => v[i].to_string(),
        Column::Text(v) => quote(&v[i], sep),
    };
    for (i, row) in export.x.rows().into_iter().enumerate() {
        let mut fields: Vec<String> = lead.iter().map(|(_, c)| cell(c, i)).collect();
        fields.extend(row.iter().map(|v| v.to_string()));
        fields.extend(tail.iter().map(|(_, c)| cell(c, i)));
        writeln!(out, "{}", fields.join(&s))?;
    }
    out.flush()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rfc4180_records() {
        // RFC 4180 §2: quoted fields may hold separators, doubled quotes and line breaks.
        let r = records(
            "a,b\r\n\"x,1\",\"say \"\"hi\"\"\"\n\"two\nlines\",3\n\n",
            ',',
            Path::new("t.csv"),
        )
        .unwrap();
        assert_eq!(r.len(), 3);
        assert_eq!(r[1].fields, vec!["x,1", "say \"hi\""]);
        assert_eq!(
            (r[2].line, r[2].fields.clone()),
            (3, vec!["two\nlines".to_string(), "3".into()])
        );
        assert!(records("a,\"b\n", ',', Path::new("t.csv")).is_err());
        assert_eq!(quote("a,b", ','), "\"a,b\"");
    }
}
