//! Reading a Parquet or Arrow IPC file: record batches are gathered with a memory check after
//! each one, then every column gets its role by the same rules as a CSV header
//! (`csv::table::resolve`), and the embeddings come from one list column or from all
//! numeric columns that have no role.

use std::path::Path;
use std::sync::Arc;

use arrow_array::{ArrayRef, RecordBatch};
use arrow_schema::SchemaRef;

use super::super::ReadOptions;
use super::super::assemble::{Parts, Stored};
use super::super::carried::Carried;
use super::super::csv::table::{self, Role};
use super::decode;
use crate::data::FloatType;
use crate::error::{Error, Result};

/// Where the embeddings are, decided from the schema before any batch is read.
enum Embeddings {
    /// One list column, by index.
    List(usize),
    /// Every numeric column without a role, by index.
    Columns(Vec<usize>),
}

/// The embeddings layout and each column's role; columns that are neither a role nor a
/// feature are carried.
struct Layout {
    names: Vec<String>,
    roles: Vec<Role>,
    embeddings: Embeddings,
    carried: Vec<usize>,
    is_export: bool,
    notes: Vec<String>,
}

fn layout(path: &Path, schema: &SchemaRef, opts: &ReadOptions) -> Result<Layout> {
    let names: Vec<String> = schema.fields().iter().map(|f| f.name().clone()).collect();
    let cols = table::resolve(path, "schema", names, opts)?;
    let types: Vec<_> = schema.fields().iter().map(|f| f.data_type()).collect();
    let key = opts.embeddings_key.as_str();
    let lists: Vec<&str> = (0..types.len())
        .filter(|&i| decode::is_list(types[i]))
        .map(|i| cols.names[i].as_str())
        .collect();
    let named = cols.names.iter().position(|n| n == key);
    let embeddings = match named {
        Some(i) if cols.roles[i] == Role::Feature => Embeddings::List(i),
        Some(i) => {
            return Err(Error::input_at(
                path,
                format!("column '{key}'"),
                format!(
                    "column '{key}' is named as the embeddings and also has the role {:?}",
                    cols.roles[i]
                ),
                "give the embeddings column and the role columns different names",
            ));
        }
        None if !lists.is_empty() => {
            return Err(Error::input_at(
                path,
                format!("column '{key}'"),
                format!(
                    "no embeddings column '{key}'; list columns present: {}",
                    lists.join(", ")
                ),
                "pass `embeddings_key` with the name of the list column holding the embeddings",
            ));
        }
        None => Embeddings::Columns(
            (0..types.len())
                .filter(|&i| cols.roles[i] == Role::Feature && decode::is_numeric(types[i]))
                .collect(),
        ),
    };
    let is_feature = |i: usize| match &embeddings {
        Embeddings::List(e) => *e == i,
        Embeddings::Columns(c) => c.contains(&i),
    };
    let carried = (0..types.len())
        .filter(|&i| matches!(cols.roles[i], Role::Feature | Role::Ignored) && !is_feature(i))
        .collect();
    Ok(Layout {
        names: cols.names,
        roles: cols.roles,
        embeddings,
        carried,
        is_export: cols.is_export,
        notes: cols.notes,
    })
}

/// Embedding width for the memory check: the feature columns, or a list column's width as
/// its first batch shows it (one until a batch is seen).
fn dims_of(layout: &Layout, batch: Option<&RecordBatch>) -> usize {
    match &layout.embeddings {
        Embeddings::Columns(c) => c.len(),
        Embeddings::List(i) => batch.map_or(1, |b| decode::list_width(b.column(*i)).max(1)),
    }
}

/// Reads every batch from `batches`, checking after each that the rows so far fit the
/// memory limit, and lays the columns out as dataset parts.
pub fn read(
    path: &Path,
    schema: SchemaRef,
    batches: impl Iterator<Item = Result<RecordBatch>>,
    opts: &ReadOptions,
) -> Result<(Parts, Stored)> {
    let layout = layout(path, &schema, opts)?;
    let mut all = Vec::new();
    let mut rows = 0usize;
    for batch in batches {
        let batch = batch?;
        rows = rows.saturating_add(batch.num_rows());
        let dims = dims_of(&layout, all.first().or(Some(&batch)));
        let est = crate::memory::for_read(path, rows, dims, FloatType::F32);
        crate::memory::check(
            &est,
            opts.max_memory,
            &format!(
                "reading {} (at least {rows} rows × {dims} features)",
                path.display()
            ),
            "split the file, or free memory",
        )?;
        all.push(batch);
    }
    let batch = arrow_select::concat::concat_batches(&schema, &all).map_err(|e| {
        Error::input(
            path,
            format!("the record batches do not fit together: {e}"),
            "rewrite the file with pyarrow",
        )
    })?;
    drop(all);
    parts(path, &layout, &batch)
}

fn parts(path: &Path, layout: &Layout, batch: &RecordBatch) -> Result<(Parts, Stored)> {
    let n = batch.num_rows();
    let name = |i: usize| layout.names[i].as_str();
    let find = |role: Role| layout.roles.iter().position(|r| *r == role);
    let tensor = |i: usize| decode::column(path, name(i), batch.column(i));
    let (x_source, matrix) = match &layout.embeddings {
        Embeddings::List(i) => (
            format!("column '{}'", name(*i)),
            decode::list_matrix(path, name(*i), batch.column(*i))?,
        ),
        Embeddings::Columns(c) => {
            let cols: Vec<(&str, &ArrayRef)> =
                c.iter().map(|&i| (name(i), batch.column(i))).collect();
            (
                "feature columns".to_string(),
                decode::columns_matrix(path, &cols, n)?,
            )
        }
    };
    let matrix = matrix.into_matrix(path, &x_source)?;
    let Some(label) = find(Role::Label) else {
        return Err(Error::input(
            path,
            "no label column",
            "pass `label_column` with the name of the label column",
        ));
    };
    let labels = tensor(label)?.into_labels(path, name(label))?;
    let strings = |role: Role| -> Result<Option<(String, Vec<String>, bool)>> {
        find(role)
            .map(|i| {
                let (v, int) = tensor(i)?.into_strings(path, name(i))?;
                Ok((format!("column '{}'", name(i)), v, int))
            })
            .transpose()
    };
    let ids = strings(Role::Id)?;
    let groups = strings(Role::Group)?;
    let parent_refs = strings(Role::ParentRef)?.map(|(k, v, _)| (k, v));
    let folds = find(Role::Fold)
        .map(|i| {
            let v = tensor(i)?.into_ints(path, name(i))?;
            Ok::<_, Error>((format!("column '{}'", name(i)), v))
        })
        .transpose()?;
    let provenance = |key: &str| -> Option<usize> {
        layout
            .names
            .iter()
            .position(|n| n == key)
            .filter(|&i| layout.is_export && layout.roles[i] == Role::Provenance)
    };
    let origin = provenance("origin")
        .map(|i| tensor(i)?.into_strings(path, name(i)).map(|(v, _)| v))
        .transpose()?;
    let ints = |key: &str| {
        provenance(key)
            .map(|i| tensor(i)?.into_ints(path, name(i)))
            .transpose()
    };
    let (parent, partner) = (ints("parent")?, ints("partner")?);
    let carried = Carried {
        columns: layout
            .carried
            .iter()
            .map(|&i| {
                (
                    Arc::clone(&batch.schema().fields()[i]),
                    batch.column(i).clone(),
                )
            })
            .collect(),
    };
    let stored = Stored {
        x_f64: matrix.x_f64,
        float_type: matrix.float_type,
        int_ids: ids.as_ref().is_some_and(|r| r.2),
        int_groups: groups.as_ref().is_some_and(|r| r.2),
        notes: layout.notes.clone(),
        carried: (!carried.columns.is_empty()).then_some(carried),
        table: None,
    };
    let parts = Parts {
        x: matrix.x,
        stored_dtype: matrix.dtype,
        x_source,
        labels,
        labels_source: format!("column '{}'", name(label)),
        ids: ids.map(|(k, v, _)| (k, v)),
        groups: groups.map(|(k, v, _)| (k, v)),
        folds,
        row_lines: None,
        origin,
        parent,
        partner,
        parent_refs,
    };
    Ok((parts, stored))
}
