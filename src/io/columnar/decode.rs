//! Arrow arrays into the format-neutral [`Tensor`] the keyed formats also decode into, so the
//! label, id, group and fold checks (`Tensor::into_labels` and friends) are the same code for
//! every format. Nulls are refused here with their row: embloom has no missing-value model.

use std::path::Path;

use arrow_array::cast::AsArray;
use arrow_array::types::{
    Float16Type, Float32Type, Float64Type, Int8Type, Int16Type, Int32Type, Int64Type, UInt8Type,
    UInt16Type, UInt32Type, UInt64Type,
};
use arrow_array::{Array, ArrayRef};
use arrow_schema::DataType;

use super::super::tensor::{Tensor, Values};
use crate::error::{Error, Result};

/// The refusal of a null entry at `row` of `column`.
pub fn null_at(path: &Path, column: &str, row: usize) -> Error {
    Error::input_at(
        path,
        format!("column '{column}', row {row}"),
        "missing value (null)",
        "fill in the value or remove the row (e.g. pandas dropna)",
    )
}

fn first_null(path: &Path, column: &str, a: &dyn Array) -> Result<()> {
    match a.logical_nulls() {
        Some(n) if n.null_count() > 0 => {
            let row = (0..a.len()).find(|&i| n.is_null(i)).unwrap_or(0);
            Err(null_at(path, column, row))
        }
        _ => Ok(()),
    }
}

/// Whether a column of this type can hold features (one number per row).
pub fn is_numeric(t: &DataType) -> bool {
    t.is_integer() || t.is_floating()
}

/// An unsigned 64-bit value as i64, refused with its row when it does not fit.
fn signed(path: &Path, column: &str, row: usize, v: u64) -> Result<i64> {
    i64::try_from(v).map_err(|_| {
        Error::input_at(
            path,
            format!("column '{column}', row {row}"),
            format!("value {v} does not fit a signed 64-bit integer"),
            "store smaller integers",
        )
    })
}

/// The values of a 1-D column with no nulls, widened as the keyed formats widen them.
fn values(path: &Path, column: &str, a: &ArrayRef) -> Result<(Values, String)> {
    first_null(path, column, a.as_ref())?;
    macro_rules! ints {
        ($t:ty) => {
            Values::Int(
                a.as_primitive::<$t>()
                    .values()
                    .iter()
                    .map(|&v| v as i64)
                    .collect(),
            )
        };
    }
    let v = match a.data_type() {
        DataType::Int8 => ints!(Int8Type),
        DataType::Int16 => ints!(Int16Type),
        DataType::Int32 => ints!(Int32Type),
        DataType::Int64 => ints!(Int64Type),
        DataType::UInt8 => ints!(UInt8Type),
        DataType::UInt16 => ints!(UInt16Type),
        DataType::UInt32 => ints!(UInt32Type),
        DataType::UInt64 => Values::Int(
            a.as_primitive::<UInt64Type>()
                .values()
                .iter()
                .enumerate()
                .map(|(row, &v)| signed(path, column, row, v))
                .collect::<Result<_>>()?,
        ),
        DataType::Boolean => {
            let b = a.as_boolean();
            Values::Int((0..b.len()).map(|i| i64::from(b.value(i))).collect())
        }
        DataType::Float16 => Values::F32(
            a.as_primitive::<Float16Type>()
                .values()
                .iter()
                .map(|v| v.to_f32())
                .collect(),
        ),
        DataType::Float32 => Values::F32(a.as_primitive::<Float32Type>().values().to_vec()),
        DataType::Float64 => Values::F64(a.as_primitive::<Float64Type>().values().to_vec()),
        DataType::Utf8 => Values::Text(
            a.as_string::<i32>()
                .iter()
                .map(|s| s.unwrap_or_default().to_string())
                .collect(),
        ),
        DataType::LargeUtf8 => Values::Text(
            a.as_string::<i64>()
                .iter()
                .map(|s| s.unwrap_or_default().to_string())
                .collect(),
        ),
        DataType::Utf8View => Values::Text(
            a.as_string_view()
                .iter()
                .map(|s| s.unwrap_or_default().to_string())
                .collect(),
        ),
        // pandas categoricals arrive as dictionaries: decode the dictionary once, then index.
        DataType::Dictionary(_, _) => {
            let d = a.as_any_dictionary();
            if d.values().is_empty() {
                if a.is_empty() {
                    return Ok((Values::Text(Vec::new()), dtype_name(a.data_type())));
                }
                return Err(Error::input_at(
                    path,
                    format!("column '{column}'"),
                    "a dictionary column with an empty dictionary",
                    "rewrite the file",
                ));
            }
            let (dict, _) = values(path, column, d.values())?;
            let keys = d.normalized_keys();
            let n = dict_len(&dict);
            if let Some(row) = keys.iter().position(|&k| k >= n) {
                return Err(Error::input_at(
                    path,
                    format!("column '{column}', row {row}"),
                    "dictionary index past the end of the dictionary",
                    "rewrite the file",
                ));
            }
            match dict {
                Values::Int(v) => Values::Int(keys.iter().map(|&k| v[k]).collect()),
                Values::F32(v) => Values::F32(keys.iter().map(|&k| v[k]).collect()),
                Values::F64(v) => Values::F64(keys.iter().map(|&k| v[k]).collect()),
                Values::Text(v) => Values::Text(keys.iter().map(|&k| v[k].clone()).collect()),
            }
        }
        other => {
            return Err(Error::input_at(
                path,
                format!("column '{column}'"),
                format!("type {other} cannot be read as one number or string per row"),
                "store the column as integers, floats or strings",
            ));
        }
    };
    Ok((v, dtype_name(a.data_type())))
}

fn dict_len(v: &Values) -> usize {
    match v {
        Values::Int(v) => v.len(),
        Values::F32(v) => v.len(),
        Values::F64(v) => v.len(),
        Values::Text(v) => v.len(),
    }
}

/// The dtype names the keyed formats use for floats ("f16", "f32", "f64"), Arrow's otherwise.
fn dtype_name(t: &DataType) -> String {
    match t {
        DataType::Float16 => "f16".into(),
        DataType::Float32 => "f32".into(),
        DataType::Float64 => "f64".into(),
        other => other.to_string(),
    }
}

/// One value per row, as a 1-D tensor.
pub fn column(path: &Path, name: &str, a: &ArrayRef) -> Result<Tensor> {
    let (values, dtype) = values(path, name, a)?;
    Ok(Tensor {
        shape: vec![a.len()],
        values,
        dtype,
    })
}

/// A row-major `rows × dims` tensor from a flat float child array (of a list column).
fn flat(path: &Path, name: &str, child: &ArrayRef, rows: usize, dims: usize) -> Result<Tensor> {
    let (values, dtype) = match child.data_type() {
        DataType::Float16 | DataType::Float32 | DataType::Float64 => values(path, name, child)
            .map_err(|_| {
                // A null inside a list: name the row, not the child index.
                let row = child
                    .logical_nulls()
                    .and_then(|n| (0..child.len()).find(|&i| n.is_null(i)))
                    .unwrap_or(0);
                null_at(path, name, row / dims.max(1))
            })?,
        other => {
            return Err(Error::input_at(
                path,
                format!("column '{name}'"),
                format!(
                    "a list of {other}; embeddings must be a list of float16, float32 or float64"
                ),
                "store the embeddings as a list of floats (e.g. numpy .astype('float32') before writing)",
            ));
        }
    };
    Ok(Tensor {
        shape: vec![rows, dims],
        values,
        dtype,
    })
}

/// `len` values of `child` from `start`, refused (never a panic) when the file's offsets
/// point past the values it holds.
fn within(path: &Path, name: &str, child: &ArrayRef, start: usize, len: usize) -> Result<ArrayRef> {
    if start.checked_add(len).is_none_or(|end| end > child.len()) {
        return Err(Error::input_at(
            path,
            format!("column '{name}'"),
            "list offsets point past the values the column holds",
            "rewrite the file with pyarrow",
        ));
    }
    Ok(child.slice(start, len))
}

/// A `List` column's rows, which must all have the length of the first.
fn ragged(path: &Path, name: &str, off: &[i64], values: &ArrayRef) -> Result<Tensor> {
    let rows = off.len().saturating_sub(1);
    let len = |row: usize| {
        off[row + 1]
            .checked_sub(off[row])
            .and_then(|d| usize::try_from(d).ok())
    };
    let dims = if rows == 0 { 0 } else { len(0).unwrap_or(0) };
    for row in 0..rows {
        let got = len(row);
        if got != Some(dims) {
            return Err(Error::input_at(
                path,
                format!("column '{name}', row {row}"),
                match got {
                    Some(n) => format!("{n} values where row 0 has {dims}"),
                    None => "list offsets go backwards".to_string(),
                },
                "give every row an embedding of the same length",
            ));
        }
    }
    let start = off
        .first()
        .and_then(|&s| usize::try_from(s).ok())
        .unwrap_or(0);
    let child = within(path, name, values, start, rows.saturating_mul(dims))?;
    flat(path, name, &child, rows, dims)
}

/// The embeddings of a `FixedSizeList<float>` or `List<float>` column as a `rows × dims`
/// tensor; a list column's rows must all have the same length.
pub fn list_matrix(path: &Path, name: &str, a: &ArrayRef) -> Result<Tensor> {
    first_null(path, name, a.as_ref())?;
    let rows = a.len();
    if let Some(f) = a.as_fixed_size_list_opt() {
        let dims = usize::try_from(f.value_length()).unwrap_or(0);
        // `values()` of a fixed-size list already starts at its first row.
        let child = within(path, name, f.values(), 0, rows.saturating_mul(dims))?;
        return flat(path, name, &child, rows, dims);
    }
    if let Some(l) = a.as_list_opt::<i32>() {
        let off: Vec<i64> = l.value_offsets().iter().map(|&o| i64::from(o)).collect();
        return ragged(path, name, &off, l.values());
    }
    if let Some(l) = a.as_list_opt::<i64>() {
        return ragged(path, name, l.value_offsets(), l.values());
    }
    Err(Error::input_at(
        path,
        format!("column '{name}'"),
        format!(
            "type {} is not a list; the embeddings column must be a fixed-size list or list of floats",
            a.data_type()
        ),
        "store one embedding per row as a list column, or name no embeddings column and store one numeric column per dimension",
    ))
}

/// The width of a list column's first row (a fixed-size list's declared size), for the
/// memory check before the column is decoded.
pub fn list_width(a: &ArrayRef) -> usize {
    let first = |o: &[i64]| match o {
        [s, e, ..] => usize::try_from(e.saturating_sub(*s)).unwrap_or(0),
        _ => 0,
    };
    if let Some(f) = a.as_fixed_size_list_opt() {
        usize::try_from(f.value_length()).unwrap_or(0)
    } else if let Some(l) = a.as_list_opt::<i32>() {
        let o: Vec<i64> = l
            .value_offsets()
            .iter()
            .take(2)
            .map(|&o| i64::from(o))
            .collect();
        first(&o)
    } else if let Some(l) = a.as_list_opt::<i64>() {
        first(l.value_offsets())
    } else {
        0
    }
}

/// Whether a column holds lists (a candidate embeddings column).
pub fn is_list(t: &DataType) -> bool {
    matches!(
        t,
        DataType::FixedSizeList(_, _) | DataType::List(_) | DataType::LargeList(_)
    )
}

/// Many numeric columns as one `rows × dims` tensor: f64 when any column is f64 (then the
/// f32 and integer columns widen exactly), f16 when all are f16, else f32.
pub fn columns_matrix(path: &Path, cols: &[(&str, &ArrayRef)], rows: usize) -> Result<Tensor> {
    let types: Vec<&DataType> = cols.iter().map(|(_, a)| a.data_type()).collect();
    let dtype = if types.contains(&&DataType::Float64) {
        "f64"
    } else if types.iter().all(|t| **t == DataType::Float16) {
        "f16"
    } else {
        "f32"
    };
    let dims = cols.len();
    let mut wide = vec![0f64; if dtype == "f64" { rows * dims } else { 0 }];
    let mut narrow = vec![0f32; if dtype == "f64" { 0 } else { rows * dims }];
    for (j, (name, a)) in cols.iter().enumerate() {
        let (v, _) = values(path, name, a)?;
        let mut put = |i: usize, x: f64| {
            if dtype == "f64" {
                wide[i * dims + j] = x;
            } else {
                narrow[i * dims + j] = x as f32;
            }
        };
        match v {
            Values::F32(v) => v
                .iter()
                .enumerate()
                .for_each(|(i, &x)| put(i, f64::from(x))),
            Values::F64(v) => v.iter().enumerate().for_each(|(i, &x)| put(i, x)),
            Values::Int(v) => v.iter().enumerate().for_each(|(i, &x)| put(i, x as f64)),
            // Feature columns are chosen by `is_numeric`, so they never decode to text.
            Values::Text(_) => {}
        }
    }
    let values = if dtype == "f64" {
        Values::F64(wide)
    } else {
        Values::F32(narrow)
    };
    Ok(Tensor {
        shape: vec![rows, dims],
        values,
        dtype: dtype.into(),
    })
}
