//! The checks every reader shares, applied once the pieces of a dataset have been decoded:
//! lengths agree, the matrix is not empty, non-finite rows are refused or dropped, and labels
//! become class indices.

use std::path::Path;

use ndarray::{Array2, Axis};

use super::Loaded;
use crate::data::{Dataset, FloatType, RawLabels, encode_labels};
use crate::error::{Error, Result};

/// The decoded pieces of a dataset, before the shared checks.
pub struct Parts {
    pub x: Array2<f32>,
    pub stored_dtype: String,
    /// Where the embeddings came from ("key 'embeddings'", "features", ...), for messages.
    pub x_source: String,
    pub labels: RawLabels,
    /// Where the labels came from, for messages.
    pub labels_source: String,
    pub ids: Option<(String, Vec<String>)>,
    pub groups: Option<(String, Vec<String>)>,
    pub folds: Option<(String, Vec<i64>)>,
    /// Text-file line number of each row, so messages can point into the file.
    pub row_lines: Option<Vec<usize>>,
    /// The `origin` provenance of a file embloom grew (`real` or a method name per row).
    pub origin: Option<Vec<String>>,
    /// The `parent` and `partner` provenance of a file embloom grew, as stored (see
    /// [`Loaded::parent`]).
    pub parent: Option<Vec<i64>>,
    pub partner: Option<Vec<i64>>,
    /// Each row's parent as text, from the key the caller named (see
    /// [`super::ReadOptions::parent_key`]), with where it was found.
    pub parent_refs: Option<(String, Vec<String>)>,
}

/// How a file stored what it holds, beyond the f32 matrix every reader decodes: the input's
/// own f64 values, its float type, whether ids and groups were integers, and notes on how it
/// was read. Text tables have none of it (the default: f32, text ids).
#[derive(Debug, Default)]
pub struct Stored {
    pub x_f64: Option<Array2<f64>>,
    pub float_type: FloatType,
    pub int_ids: bool,
    pub int_groups: bool,
    /// The text table the rows came from (CSV/TSV), for writing their text back.
    pub table: Option<std::sync::Arc<super::csv::TableSource>>,
    pub notes: Vec<String>,
    /// A columnar file's columns with no role (see [`super::Carried`]).
    pub carried: Option<super::Carried>,
}

fn row_name(lines: &Option<Vec<usize>>, row: usize) -> String {
    match lines.as_ref().and_then(|l| l.get(row)) {
        Some(line) => format!("row {row}, line {line}"),
        None => format!("row {row}"),
    }
}

fn keep<T: Clone>(v: Vec<T>, mask: &[bool]) -> Vec<T> {
    v.into_iter()
        .zip(mask)
        .filter(|(_, k)| **k)
        .map(|(x, _)| x)
        .collect()
}

fn keep_labels(raw: RawLabels, mask: &[bool]) -> RawLabels {
    match raw {
        RawLabels::Int(v) => RawLabels::Int(keep(v, mask)),
        RawLabels::Float(v) => RawLabels::Float(keep(v, mask)),
        RawLabels::Text(v) => RawLabels::Text(keep(v, mask)),
        RawLabels::Coded { codes, names } => RawLabels::Coded {
            codes: keep(codes, mask),
            names,
        },
    }
}

/// Applies the shared checks and builds the dataset.
pub fn finish(
    path: &Path,
    parts: Parts,
    stored: Stored,
    drop_nonfinite: bool,
    keep_nonfinite: bool,
) -> Result<Loaded> {
    let Parts {
        x,
        stored_dtype,
        x_source,
        labels,
        labels_source,
        ids,
        groups,
        folds,
        row_lines,
        origin,
        parent,
        partner,
        parent_refs,
    } = parts;
    let n = x.nrows();
    if labels.len() != n {
        return Err(Error::input_at(
            path,
            format!("{x_source} vs {labels_source}"),
            format!("{} labels for {n} embedding rows", labels.len()),
            "give exactly one label per embedding row (check the labels key or file)",
        ));
    }
    for (what, len) in [
        (
            ids.as_ref().map(|(k, _)| k),
            ids.as_ref().map(|(_, v)| v.len()),
        ),
        (
            groups.as_ref().map(|(k, _)| k),
            groups.as_ref().map(|(_, v)| v.len()),
        ),
        (
            folds.as_ref().map(|(k, _)| k),
            folds.as_ref().map(|(_, v)| v.len()),
        ),
        (
            parent_refs.as_ref().map(|(k, _)| k),
            parent_refs.as_ref().map(|(_, v)| v.len()),
        ),
    ] {
        if let (Some(key), Some(len)) = (what, len)
            && len != n
        {
            return Err(Error::input_at(
                path,
                format!("{key} vs {x_source}"),
                format!("{len} values for {n} embedding rows"),
                "give exactly one value per embedding row, or remove the member",
            ));
        }
    }
    if n == 0 {
        return Err(Error::input_at(
            path,
            x_source,
            "the embedding matrix has zero rows",
            "give a file with at least one row",
        ));
    }
    if x.ncols() == 0 {
        return Err(Error::input_at(
            path,
            x_source,
            "the embedding matrix has zero columns",
            "give a file with at least one feature column",
        ));
    }
    let finite: Vec<bool> = x
        .rows()
        .into_iter()
        .map(|r| r.iter().all(|v| v.is_finite()))
        .collect();
    let dropped = finite.iter().filter(|f| !**f).count();
    for (key, len) in [
        ("origin", origin.as_ref().map(Vec::len)),
        ("parent", parent.as_ref().map(Vec::len)),
        ("partner", partner.as_ref().map(Vec::len)),
    ] {
        if let Some(len) = len
            && len != n
        {
            return Err(Error::input_at(
                path,
                format!("{key} vs {x_source}"),
                format!("{len} values for {n} embedding rows"),
                format!("give exactly one {key} per row, or remove the {key} column"),
            ));
        }
    }
    // Rows dropped for NaN/Inf take their provenance with them; the stored indices are kept.
    let (parent, partner, parent_refs) = if dropped == 0 || keep_nonfinite {
        (parent, partner, parent_refs.map(|(_, v)| v))
    } else {
        (
            parent.map(|v| keep(v, &finite)),
            partner.map(|v| keep(v, &finite)),
            parent_refs.map(|(_, v)| keep(v, &finite)),
        )
    };
    let Stored {
        x_f64,
        float_type,
        int_ids,
        int_groups,
        table,
        notes,
        carried,
    } = stored;
    let (x, x_f64, labels, ids, groups, folds, origin, source_row) =
        if dropped == 0 || keep_nonfinite {
            (x, x_f64, labels, ids, groups, folds, origin, None)
        } else if !drop_nonfinite {
            let first = finite.iter().position(|f| !*f).unwrap_or(0);
            return Err(Error::input_at(
                path,
                format!("{x_source}, {}", row_name(&row_lines, first)),
                format!("{dropped} row(s) hold NaN or infinite values; the first is row {first}"),
                "fix the embeddings, or pass `drop_nonfinite` to skip those rows",
            ));
        } else {
            if dropped == n {
                return Err(Error::input_at(
                    path,
                    x_source,
                    "every row holds NaN or infinite values",
                    "fix the embeddings",
                ));
            }
            let rows: Vec<usize> = (0..n).filter(|&i| finite[i]).collect();
            (
                x.select(Axis(0), &rows),
                x_f64.map(|o| o.select(Axis(0), &rows)),
                keep_labels(labels, &finite),
                ids.map(|(k, v)| (k, keep(v, &finite))),
                groups.map(|(k, v)| (k, keep(v, &finite))),
                folds.map(|(k, v)| (k, keep(v, &finite))),
                origin.map(|v| keep(v, &finite)),
                Some(rows.iter().map(|&i| i as i64).collect()),
            )
        };
    let (codes, classes) = encode_labels(labels, path, &labels_source)?;
    let mut dataset = Dataset::new(x, codes, classes);
    dataset.ids = ids.map(|(_, v)| v);
    dataset.groups = groups.map(|(_, v)| v);
    dataset.folds = folds.map(|(_, v)| v);
    dataset.stored_dtype = stored_dtype;
    dataset.float_type = float_type;
    dataset.x_f64 = x_f64;
    dataset.source_row = source_row;
    dataset.int_ids = int_ids && dataset.ids.is_some();
    dataset.int_groups = int_groups && dataset.groups.is_some();
    dataset.table = table;
    Ok(Loaded {
        dataset,
        dropped_nonfinite: dropped,
        origin,
        parent,
        partner,
        parent_refs,
        notes,
        carried,
    })
}
