//! The one in-memory shape every container format decodes into before a dataset is assembled:
//! a shape plus typed values. Keeping it format-neutral lets the shape and dtype checks (2-D,
//! float embeddings, 1-D labels) be written once instead of once per format.

use std::path::Path;

use ndarray::Array2;

use crate::data::{FloatType, RawLabels};
use crate::error::{Error, Result};

/// Decoded element values, widened to a few working types.
#[derive(Debug, Clone)]
pub enum Values {
    /// f16, bf16 and f32 data (exactly representable in f32).
    F32(Vec<f32>),
    F64(Vec<f64>),
    Int(Vec<i64>),
    Text(Vec<String>),
}

/// An embeddings matrix as decoded: the f32 working copy, and for f64 input the input's own
/// values, which the f32 copy only rounds.
#[derive(Debug, Clone)]
pub struct Matrix {
    pub x: Array2<f32>,
    pub x_f64: Option<Array2<f64>>,
    pub float_type: FloatType,
    /// The element type as stored ("f16", "f32", ...).
    pub dtype: String,
}

/// A decoded array in C (row-major) order.
#[derive(Debug, Clone)]
pub struct Tensor {
    pub shape: Vec<usize>,
    pub values: Values,
    /// The element type as stored ("f16", "f32", "i64", "<U7", ...).
    pub dtype: String,
}

impl Tensor {
    fn shape_text(&self) -> String {
        let dims: Vec<String> = self.shape.iter().map(|d| d.to_string()).collect();
        format!("({})", dims.join(", "))
    }

    /// The embeddings matrix. Refuses non-float data and anything that is not 2-D.
    pub fn into_matrix(self, path: &Path, key: &str) -> Result<Matrix> {
        if self.shape.len() != 2 {
            return Err(Error::input_at(
                path,
                format!("key '{key}'"),
                format!(
                    "embeddings must be a 2-D array (rows × dims), found shape {}",
                    self.shape_text()
                ),
                "store one embedding per row as a 2-D array",
            ));
        }
        let (rows, cols) = (self.shape[0], self.shape[1]);
        let shaped = |e: ndarray::ShapeError| {
            Error::input_at(
                path,
                format!("key '{key}'"),
                format!("shape and data disagree: {e}"),
                "rewrite the file",
            )
        };
        let (data, x_f64): (Vec<f32>, _) = match self.values {
            Values::F32(v) => (v, None),
            Values::F64(v) => (
                v.iter().map(|&x| x as f32).collect(),
                Some(Array2::from_shape_vec((rows, cols), v).map_err(shaped)?),
            ),
            Values::Int(_) | Values::Text(_) => {
                return Err(Error::input_at(
                    path,
                    format!("key '{key}'"),
                    format!(
                        "embeddings have element type {}; only float16, bfloat16, float32 and float64 are accepted",
                        self.dtype
                    ),
                    "convert the embeddings to a float type (e.g. numpy .astype('float32'))",
                ));
            }
        };
        let x = Array2::from_shape_vec((rows, cols), data).map_err(shaped)?;
        let float_type = if x_f64.is_some() {
            FloatType::F64
        } else {
            FloatType::of_dtype(&self.dtype)
        };
        Ok(Matrix {
            x,
            x_f64,
            float_type,
            dtype: self.dtype,
        })
    }

    /// Checks the array is a column (n or n×1) and returns its length.
    fn column_len(&self, path: &Path, key: &str) -> Result<usize> {
        match self.shape.as_slice() {
            [n] | [n, 1] => Ok(*n),
            _ => Err(Error::input_at(
                path,
                format!("key '{key}'"),
                format!(
                    "expected a 1-D array (one value per row), found shape {}",
                    self.shape_text()
                ),
                "store one value per row as a 1-D array",
            )),
        }
    }

    /// A label column, any type; `data::encode_labels` does the rest.
    pub fn into_labels(self, path: &Path, key: &str) -> Result<RawLabels> {
        self.column_len(path, key)?;
        Ok(match self.values {
            Values::F32(v) => RawLabels::Float(v.into_iter().map(f64::from).collect()),
            Values::F64(v) => RawLabels::Float(v),
            Values::Int(v) => RawLabels::Int(v),
            Values::Text(v) => RawLabels::Text(v),
        })
    }

    /// A text-like column (ids, groups): integers become their decimal strings, and the
    /// flag says they were integers so an output can store them as integers again.
    pub fn into_strings(self, path: &Path, key: &str) -> Result<(Vec<String>, bool)> {
        self.column_len(path, key)?;
        match self.values {
            Values::Int(v) => Ok((v.into_iter().map(|i| i.to_string()).collect(), true)),
            Values::Text(v) => Ok((v, false)),
            Values::F32(_) | Values::F64(_) => Err(Error::input_at(
                path,
                format!("key '{key}'"),
                format!("expected integers or strings, found {}", self.dtype),
                "store ids and groups as integers or strings",
            )),
        }
    }

    /// An integer column (fold assignment). Integral floats are accepted.
    pub fn into_ints(self, path: &Path, key: &str) -> Result<Vec<i64>> {
        self.column_len(path, key)?;
        let floats = match self.values {
            Values::Int(v) => return Ok(v),
            Values::F32(v) => v.into_iter().map(f64::from).collect(),
            Values::F64(v) => v,
            Values::Text(_) => {
                return Err(Error::input_at(
                    path,
                    format!("key '{key}'"),
                    format!("expected integers, found {}", self.dtype),
                    "store the fold assignment as integers",
                ));
            }
        };
        floats
            .iter()
            .enumerate()
            .map(|(row, &f)| {
                if f.is_finite() && f.fract() == 0.0 && f.abs() < 9.0e15 {
                    Ok(f as i64)
                } else {
                    Err(Error::input_at(
                        path,
                        format!("key '{key}', row {row}"),
                        format!("value {f} is not a whole number"),
                        "store the fold assignment as integers",
                    ))
                }
            })
            .collect()
    }
}

/// A container whose arrays are found by key (npz members, safetensors tensors, HDF5
/// datasets). The keyed formats differ only in how an array is found and decoded.
pub trait Keyed {
    /// The array at `key`, or an error listing the keys that are there.
    fn get(&mut self, key: &str) -> Result<Tensor>;
    /// The array at `key` if present.
    fn get_optional(&mut self, key: &str) -> Result<Option<Tensor>>;
}

/// A role array (`id`, `group`) under its name, or under the plural name embloom once wrote,
/// with a note: where it was found, its values as text, and whether they were integers.
fn role_array(
    src: &mut impl Keyed,
    path: &Path,
    key: &str,
    old: &str,
    notes: &mut Vec<String>,
) -> Result<Option<(String, Vec<String>, bool)>> {
    let (found, tensor) = match src.get_optional(key)? {
        Some(t) => (key, Some(t)),
        None => (old, src.get_optional(old)?),
    };
    let Some(tensor) = tensor else {
        return Ok(None);
    };
    if found == old {
        notes.push(format!(
            "read key '{old}' as the row {key}s; embloom now names it '{key}', as CSV does"
        ));
    }
    let (values, int) = tensor.into_strings(path, found)?;
    Ok(Some((format!("key '{found}'"), values, int)))
}

/// The dataset parts of a keyed container: embeddings and labels by the chosen keys, and the
/// optional `id`, `group` and fold arrays (`ids` and `groups`, the names embloom once wrote,
/// are read too, with a note).
pub fn keyed_parts(
    src: &mut impl Keyed,
    path: &Path,
    opts: &super::ReadOptions,
) -> Result<(super::assemble::Parts, super::assemble::Stored)> {
    let matrix = src
        .get(&opts.embeddings_key)?
        .into_matrix(path, &opts.embeddings_key)?;
    let labels = src
        .get(&opts.labels_key)?
        .into_labels(path, &opts.labels_key)?;
    let mut notes = Vec::new();
    let ids = role_array(src, path, "id", "ids", &mut notes)?;
    let groups = role_array(src, path, "group", "groups", &mut notes)?;
    let origin = src
        .get_optional("origin")?
        .map(|t| t.into_strings(path, "origin"))
        .transpose()?
        .map(|(v, _)| v);
    let mut provenance_ints = |key: &str| -> Result<Option<Vec<i64>>> {
        src.get_optional(key)?
            .map(|t| t.into_ints(path, key))
            .transpose()
    };
    let (parent, partner) = if origin.is_some() {
        (provenance_ints("parent")?, provenance_ints("partner")?)
    } else {
        (None, None)
    };
    let parent_refs = match opts.parent_key.as_deref() {
        Some(key) => Some((
            format!("key '{key}'"),
            src.get(key)?.into_strings(path, key)?.0,
        )),
        None => None,
    };
    // The default fold key falls back to the plural spelling, with a note, as `id` and
    // `group` do; a key the caller named is read as named.
    let mut fold_key = opts.fold_key.as_str();
    let mut fold_tensor = src.get_optional(fold_key)?;
    if fold_tensor.is_none() && fold_key == super::DEFAULT_FOLD_KEY {
        fold_tensor = src.get_optional(super::OLD_FOLD_KEY)?;
        if fold_tensor.is_some() {
            fold_key = super::OLD_FOLD_KEY;
            notes.push(format!(
                "read key '{fold_key}' as the row folds; embloom names it '{}'",
                super::DEFAULT_FOLD_KEY
            ));
        }
    }
    let folds = fold_tensor
        .map(|t| t.into_ints(path, fold_key))
        .transpose()?;
    let stored = super::assemble::Stored {
        x_f64: matrix.x_f64,
        float_type: matrix.float_type,
        int_ids: ids.as_ref().is_some_and(|r| r.2),
        int_groups: groups.as_ref().is_some_and(|r| r.2),
        table: None,
        notes,
        carried: None,
    };
    let parts = super::assemble::Parts {
        x: matrix.x,
        stored_dtype: matrix.dtype,
        x_source: format!("key '{}'", opts.embeddings_key),
        labels,
        labels_source: format!("key '{}'", opts.labels_key),
        ids: ids.map(|(k, v, _)| (k, v)),
        groups: groups.map(|(k, v, _)| (k, v)),
        folds: folds.map(|v| (format!("key '{fold_key}'"), v)),
        row_lines: None,
        origin,
        parent,
        partner,
        parent_refs,
    };
    Ok((parts, stored))
}
