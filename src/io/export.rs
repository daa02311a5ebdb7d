//! What every writer exports, assembled once: the matrix in the input's float type plus named
//! per-row columns (id, labels, group, fold, source_row, then provenance). Writers differ only
//! in how they lay these out.

use std::path::Path;

use ndarray::Array2;

use super::AugmentedSet;
use super::csv::{Role, TableSource};
use crate::data::FloatType;
use crate::error::{Error, Result};

/// The embeddings in the type they are written in: the input's, so real rows come out as
/// they came in. Half types are converted from the f32 matrix on writing (exact for real
/// rows, which came from that type; rounding for synthetic rows).
pub enum Matrix<'a> {
    F16(&'a Array2<f32>),
    BF16(&'a Array2<f32>),
    F32(&'a Array2<f32>),
    F64(std::borrow::Cow<'a, Array2<f64>>),
}

impl Matrix<'_> {
    /// The shortest text that reads back to row `i`, column `j` in the matrix's own type
    /// (Rust's float `Display` guarantees the round trip; half types are exact in f32).
    pub fn text(&self, i: usize, j: usize) -> String {
        match self {
            Matrix::F16(x) | Matrix::BF16(x) | Matrix::F32(x) => x[[i, j]].to_string(),
            Matrix::F64(x) => x[[i, j]].to_string(),
        }
    }

    pub fn shape(&self) -> [usize; 2] {
        let (r, c) = match self {
            Matrix::F16(x) | Matrix::BF16(x) | Matrix::F32(x) => x.dim(),
            Matrix::F64(x) => x.dim(),
        };
        [r, c]
    }

    /// IEEE half bits, row-major.
    pub fn f16_bits(x: &Array2<f32>) -> Vec<u16> {
        x.iter()
            .map(|&v| half::f16::from_f32(v).to_bits())
            .collect()
    }

    /// bfloat16 bits, row-major.
    pub fn bf16_bits(x: &Array2<f32>) -> Vec<u16> {
        x.iter()
            .map(|&v| half::bf16::from_f32(v).to_bits())
            .collect()
    }
}

/// Where a row came from in the input file; synthetic rows carry their parent's.
pub const SOURCE_ROW: &str = "source_row";

/// A per-row column.
#[derive(Debug, Clone)]
pub enum Column {
    Int(Vec<i64>),
    F32(Vec<f32>),
    Text(Vec<String>),
}

impl Column {
    pub fn len(&self) -> usize {
        match self {
            Column::Int(v) => v.len(),
            Column::F32(v) => v.len(),
            Column::Text(v) => v.len(),
        }
    }
}

/// Provenance column keys, in order; they follow the features in a table.
pub const PROVENANCE: [&str; 4] = ["origin", "parent", "partner", "weight"];

/// The provenance column written after [`PROVENANCE`] only when a row has a soft label
/// (mix): the partner's class name, so the target `weight·e(label) + (1 − weight)·e(partner)`
/// can be rebuilt from the file alone.
pub const PARTNER_LABEL: &str = "partner_label";

/// Whether `key` is a provenance column (written after the features in a table).
pub fn is_provenance(key: &str) -> bool {
    PROVENANCE.contains(&key) || key == PARTNER_LABEL
}

/// The exported content of an augmented set.
pub struct Export<'a> {
    /// The matrix in the input's float type (text output writes each value as the shortest
    /// text that reads back to it in that type).
    pub stored: Matrix<'a>,
    /// Keyed columns in table order: id, labels, group, fold (those present), the input
    /// table's ignored columns (binary outputs only), source_row, then [`PROVENANCE`].
    pub columns: Vec<(String, Column)>,
    /// The table the real rows were read from, when the input was CSV/TSV: a table output
    /// then keeps its columns and copies the real rows' text from it.
    pub table: Option<&'a TableSource>,
    /// The real rows (the first rows; each is row `source_row` of the input).
    pub n_real: usize,
}

impl Export<'_> {
    /// The column under `key`.
    pub fn column(&self, key: &str) -> Option<&Column> {
        self.columns.iter().find(|(k, _)| k == key).map(|(_, c)| c)
    }
}

/// Names the table writer appends after the input's own columns.
pub const APPENDED: [&str; 5] = [SOURCE_ROW, "origin", "parent", "partner", "weight"];

fn clash(path: &Path, name: &str, table: &TableSource) -> Error {
    Error::output(
        path,
        format!(
            "column '{name}' of {} has the name of a column embloom writes itself",
            table.path.display()
        ),
        format!("rename the column '{name}' in the input table"),
    )
}

/// The input table's ignored columns for the real rows, read again from the table (see
/// `csv/source.rs`), then the fill for synthetic rows: integers (every real row's cell an
/// integer as `i64` writes it) stay integers with −1 for synthetic rows, anything else is the
/// cells' text with empty text for synthetic rows.
fn ignored_columns(
    table: &TableSource,
    source_rows: &[i64],
    n_real: usize,
    n: usize,
) -> Result<Vec<(String, Column)>> {
    let ignored: Vec<usize> = (0..table.names.len())
        .filter(|&k| table.roles[k] == Role::Ignored)
        .collect();
    if ignored.is_empty() {
        return Ok(Vec::new());
    }
    let mut cells: Vec<Vec<String>> = vec![Vec::with_capacity(n); ignored.len()];
    let mut rows = table.reopen()?;
    for &r in &source_rows[..n_real] {
        let record = rows.fields(r as usize)?;
        for (out, &k) in cells.iter_mut().zip(&ignored) {
            let text = std::str::from_utf8(&record[k]).map_err(|_| {
                Error::input_at(
                    &table.path,
                    format!("row {r}, column '{}'", table.names[k]),
                    "the file is not valid UTF-8",
                    "save the table as UTF-8",
                )
            })?;
            out.push(text.to_string());
        }
    }
    Ok(ignored
        .iter()
        .zip(cells)
        .map(|(&k, mut v)| {
            let ints: Option<Vec<i64>> = v
                .iter()
                .map(|s| s.parse::<i64>().ok().filter(|i| i.to_string() == *s))
                .collect();
            let col = match ints {
                Some(mut i) if !v.is_empty() => {
                    i.resize(n, -1);
                    Column::Int(i)
                }
                _ => {
                    v.resize(n, String::new());
                    Column::Text(v)
                }
            };
            (table.names[k].clone(), col)
        })
        .collect())
}

/// Ids or groups as integers when the input stored them so (and every value still reads as
/// one), else as text.
fn role_column(v: &[String], int: bool) -> Column {
    let ints: Option<Vec<i64>> = int
        .then(|| v.iter().map(|s| s.parse::<i64>().ok()).collect())
        .flatten();
    match ints {
        Some(i) => Column::Int(i),
        None => Column::Text(v.to_vec()),
    }
}

/// Labels as integers when every class name is one (so numeric labels stay numeric), else text.
fn label_column(set: &AugmentedSet) -> Column {
    let d = &set.data;
    let ints: Option<Vec<i64>> = d
        .classes
        .iter()
        .map(|c| c.parse::<i64>().ok().filter(|i| i.to_string() == *c))
        .collect();
    match ints {
        Some(codes) => Column::Int(d.labels.iter().map(|&l| codes[l as usize]).collect()),
        None => Column::Text(
            d.labels
                .iter()
                .map(|&l| d.classes[l as usize].clone())
                .collect(),
        ),
    }
}

/// Checks the set is consistent and lays it out as columns; `text` says the output is a
/// table, which copies an input table's ignored columns itself.
pub fn prepare<'a>(path: &Path, set: &'a AugmentedSet, text: bool) -> Result<Export<'a>> {
    let d = &set.data;
    let n = d.n_rows();
    let lens = [
        ("labels", d.labels.len()),
        ("origin", set.origin.len()),
        ("parent", set.parent.len()),
        ("partner", set.partner.len()),
        ("weight", set.weight.len()),
        (
            PARTNER_LABEL,
            set.partner_label.as_ref().map_or(n, Vec::len),
        ),
        ("id", d.ids.as_ref().map_or(n, Vec::len)),
        ("group", d.groups.as_ref().map_or(n, Vec::len)),
        ("fold", d.folds.as_ref().map_or(n, Vec::len)),
        (SOURCE_ROW, d.source_row.as_ref().map_or(n, Vec::len)),
        ("x_f64", d.x_f64.as_ref().map_or(n, |x| x.nrows())),
    ];
    if let Some((name, len)) = lens.iter().find(|(_, len)| *len != n) {
        return Err(Error::output(
            path,
            format!("{name} has {len} entries for {n} rows"),
            "this is a bug in the caller; please report it",
        ));
    }
    if let Some(bad) = d.labels.iter().find(|&&l| l as usize >= d.classes.len()) {
        return Err(Error::output(
            path,
            format!("label index {bad} has no class name"),
            "this is a bug in the caller; please report it",
        ));
    }
    if let Some(o) = &d.x_f64
        && o.ncols() != d.dims()
    {
        return Err(Error::output(
            path,
            format!("the f64 values have {} columns for {}", o.ncols(), d.dims()),
            "this is a bug in the caller; please report it",
        ));
    }
    let source_rows = d.source_rows();
    let n_real = set.origin.iter().take_while(|o| *o == "real").count();
    let table = d.table.as_deref();
    if let Some(t) = table
        && let Some(r) = source_rows[..n_real]
            .iter()
            .find(|&&r| r < 0 || r as usize >= t.rows())
    {
        return Err(Error::output(
            path,
            format!(
                "real row source {r} is not a row of {} ({} rows)",
                t.path.display(),
                t.rows()
            ),
            "this is a bug in the caller; please report it",
        ));
    }
    let mut columns: Vec<(String, Column)> = Vec::new();
    let mut push = |k: &str, c: Column| columns.push((k.to_string(), c));
    if let Some(ids) = &d.ids {
        push("id", role_column(ids, d.int_ids));
    }
    push("labels", label_column(set));
    if let Some(g) = &d.groups {
        push("group", role_column(g, d.int_groups));
    }
    if let Some(f) = &d.folds {
        push("fold", Column::Int(f.clone()));
    }
    let carried = match table {
        Some(t) if !text => ignored_columns(t, &source_rows, n_real, n)?,
        _ => Vec::new(),
    };
    let mut appended: Vec<(&str, Column)> = vec![
        (SOURCE_ROW, Column::Int(source_rows)),
        ("origin", Column::Text(set.origin.clone())),
        ("parent", Column::Int(set.parent.clone())),
        ("partner", Column::Int(set.partner.clone())),
        ("weight", Column::F32(set.weight.clone())),
    ];
    if let Some(p) = &set.partner_label {
        appended.push((PARTNER_LABEL, Column::Text(p.clone())));
    }
    if let Some(t) = table {
        // A table output keeps the input's columns beside the appended ones; a binary output
        // keeps the ignored columns beside every key it writes.
        let taken: Vec<&str> = if text {
            let mut k = APPENDED.to_vec();
            k.push(PARTNER_LABEL);
            k
        } else {
            let mut k: Vec<&str> = columns.iter().map(|(k, _)| k.as_str()).collect();
            k.extend(APPENDED);
            k.push(PARTNER_LABEL);
            k.push("embeddings");
            k
        };
        let own: Vec<&str> = if text {
            (0..t.names.len())
                .filter(|&k| t.roles[k] != Role::Provenance)
                .map(|k| t.names[k].as_str())
                .collect()
        } else {
            carried.iter().map(|(k, _)| k.as_str()).collect()
        };
        if let Some(name) = own.iter().find(|n| taken.contains(n)) {
            return Err(clash(path, name, t));
        }
    }
    columns.extend(carried);
    columns.extend(appended.into_iter().map(|(k, c)| (k.to_string(), c)));
    let stored = match d.float_type {
        FloatType::F16 => Matrix::F16(&d.x),
        FloatType::BF16 => Matrix::BF16(&d.x),
        FloatType::F32 => Matrix::F32(&d.x),
        FloatType::F64 => Matrix::F64(match &d.x_f64 {
            Some(o) => std::borrow::Cow::Borrowed(o),
            None => std::borrow::Cow::Owned(d.x.mapv(f64::from)),
        }),
    };
    Ok(Export {
        stored,
        columns,
        table,
        n_real,
    })
}
