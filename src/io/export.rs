//! What every writer exports, assembled once: the matrix in the input's float type plus named
//! per-row columns (id, labels, group, fold, source_row, then provenance). Writers differ only
//! in how they lay these out.

use std::path::Path;

use ndarray::Array2;

use super::AugmentedSet;
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

/// The exported content of an augmented set.
pub struct Export<'a> {
    /// The f32 matrix, for text output (which writes what embloom computed in).
    pub x: &'a Array2<f32>,
    /// The matrix in the input's float type, for the binary formats.
    pub stored: Matrix<'a>,
    /// Keyed columns in table order: id, labels, group, fold (those present), source_row,
    /// then [`PROVENANCE`].
    pub columns: Vec<(&'static str, Column)>,
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

/// Checks the set is consistent and lays it out as columns.
pub fn prepare<'a>(path: &Path, set: &'a AugmentedSet) -> Result<Export<'a>> {
    let d = &set.data;
    let n = d.n_rows();
    let lens = [
        ("labels", d.labels.len()),
        ("origin", set.origin.len()),
        ("parent", set.parent.len()),
        ("partner", set.partner.len()),
        ("weight", set.weight.len()),
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
    let mut columns = Vec::new();
    if let Some(ids) = &d.ids {
        columns.push(("id", role_column(ids, d.int_ids)));
    }
    columns.push(("labels", label_column(set)));
    if let Some(g) = &d.groups {
        columns.push(("group", role_column(g, d.int_groups)));
    }
    if let Some(f) = &d.folds {
        columns.push(("fold", Column::Int(f.clone())));
    }
    columns.push((SOURCE_ROW, Column::Int(d.source_rows())));
    columns.push(("origin", Column::Text(set.origin.clone())));
    columns.push(("parent", Column::Int(set.parent.clone())));
    columns.push(("partner", Column::Int(set.partner.clone())));
    columns.push(("weight", Column::F32(set.weight.clone())));
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
        x: &d.x,
        stored,
        columns,
    })
}
