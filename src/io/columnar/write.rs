//! An export as one Arrow record batch: the role columns under their table names (`id`,
//! `label`, `group`, `fold`, `source_row`), the embeddings as one fixed-size list column
//! `embeddings` in the input's float type (bfloat16, which Arrow lacks, as float32: exact),
//! the provenance columns, then the input's carried columns (null on synthetic rows).

use std::sync::Arc;

use arrow_array::types::{Float16Type, Float32Type, Float64Type};
use arrow_array::{
    ArrayRef, FixedSizeListArray, Float32Array, Int64Array, PrimitiveArray, RecordBatch,
    StringArray, UInt64Array,
};
use arrow_schema::{ArrowError, DataType, Field, Schema};

use super::super::carried::Carried;
use super::super::export::{Column, Export, Matrix, is_provenance};

/// The column name of an export key in a table (as the CSV writer names them).
fn heading(key: &str) -> &str {
    match key {
        "labels" => "label",
        k => k,
    }
}

fn column(c: &Column) -> ArrayRef {
    match c {
        Column::Int(v) => Arc::new(Int64Array::from(v.clone())),
        Column::F32(v) => Arc::new(Float32Array::from(v.clone())),
        Column::Text(v) => Arc::new(StringArray::from_iter_values(v)),
    }
}

fn embeddings(m: &Matrix<'_>) -> Result<(Field, ArrayRef), ArrowError> {
    let [_, dims] = m.shape();
    let (item, values): (DataType, ArrayRef) = match m {
        Matrix::F16(x) => (
            DataType::Float16,
            Arc::new(PrimitiveArray::<Float16Type>::from_iter_values(
                x.iter().map(|&v| half::f16::from_f32(v)),
            )),
        ),
        Matrix::BF16(x) | Matrix::F32(x) => (
            DataType::Float32,
            Arc::new(PrimitiveArray::<Float32Type>::from_iter_values(
                x.iter().copied(),
            )),
        ),
        Matrix::F64(x) => (
            DataType::Float64,
            Arc::new(PrimitiveArray::<Float64Type>::from_iter_values(
                x.iter().copied(),
            )),
        ),
    };
    let item = Arc::new(Field::new("item", item, true));
    let size = i32::try_from(dims)
        .map_err(|_| ArrowError::InvalidArgumentError(format!("{dims} dimensions")))?;
    let list = FixedSizeListArray::try_new(Arc::clone(&item), size, values, None)?;
    Ok((
        Field::new("embeddings", DataType::FixedSizeList(item, size), false),
        Arc::new(list),
    ))
}

/// The export as one record batch. `real` marks the rows whose carried values are the
/// input's row `source_row`; the other (synthetic) rows carry nulls.
pub fn batch(
    export: &Export<'_>,
    carried: Option<&Carried>,
    real: &[bool],
) -> Result<RecordBatch, ArrowError> {
    let (lead, tail): (Vec<_>, Vec<_>) =
        export.columns.iter().partition(|(k, _)| !is_provenance(k));
    let mut fields = Vec::new();
    let mut arrays: Vec<ArrayRef> = Vec::new();
    let mut add = |name: &str, a: ArrayRef| {
        fields.push(Field::new(heading(name), a.data_type().clone(), false));
        arrays.push(a);
    };
    lead.iter().for_each(|(k, c)| add(k, column(c)));
    let (list_field, list) = embeddings(&export.stored)?;
    add(list_field.name(), list);
    tail.iter().for_each(|(k, c)| add(k, column(c)));
    if let Some(carried) = carried {
        let source_row = export
            .columns
            .iter()
            .find_map(|(k, c)| match c {
                Column::Int(v) if *k == super::super::export::SOURCE_ROW => Some(v),
                _ => None,
            })
            .ok_or_else(|| ArrowError::InvalidArgumentError("no source_row column".into()))?;
        let take: UInt64Array = source_row
            .iter()
            .zip(real)
            .map(|(&r, &is_real)| (is_real && r >= 0).then_some(r as u64))
            .collect();
        for (field, values) in &carried.columns {
            if fields.iter().any(|f| f.name() == field.name()) {
                return Err(ArrowError::InvalidArgumentError(format!(
                    "the input's column '{}' has the name of a column embloom writes; rename it in the input",
                    field.name()
                )));
            }
            let a = arrow_select::take::take(values.as_ref(), &take, None)?;
            fields.push(field.as_ref().clone().with_nullable(true));
            arrays.push(a);
        }
    }
    RecordBatch::try_new(Arc::new(Schema::new(fields)), arrays)
}
