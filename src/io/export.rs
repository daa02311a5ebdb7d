//! What every writer exports, assembled once: the matrix plus named per-row columns (ids,
//! labels, groups, fold, then provenance). Writers differ only in how they lay these out.

use std::path::Path;

use ndarray::Array2;

use super::AugmentedSet;
use crate::error::{Error, Result};

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
    pub x: &'a Array2<f32>,
    /// Keyed columns in table order: ids, labels, groups, fold (those present), then [`PROVENANCE`].
    pub columns: Vec<(&'static str, Column)>,
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
        ("ids", d.ids.as_ref().map_or(n, Vec::len)),
        ("groups", d.groups.as_ref().map_or(n, Vec::len)),
        ("fold", d.folds.as_ref().map_or(n, Vec::len)),
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
    let mut columns = Vec::new();
    if let Some(ids) = &d.ids {
        columns.push(("ids", Column::Text(ids.clone())));
    }
    columns.push(("labels", label_column(set)));
    if let Some(g) = &d.groups {
        columns.push(("groups", Column::Text(g.clone())));
    }
    if let Some(f) = &d.folds {
        columns.push(("fold", Column::Int(f.clone())));
    }
    columns.push(("origin", Column::Text(set.origin.clone())));
    columns.push(("parent", Column::Int(set.parent.clone())));
    columns.push(("partner", Column::Int(set.partner.clone())));
    columns.push(("weight", Column::F32(set.weight.clone())));
    Ok(Export { x: &d.x, columns })
}
