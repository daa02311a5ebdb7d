//! `.safetensors`: an 8-byte little-endian header length, a JSON header mapping tensor names
//! to dtype, shape and byte offsets, then the raw little-endian data. The `safetensors` crate
//! parses and checks the header (length cap, offsets, shape × dtype against the bytes) and
//! writes the file; this module maps its errors to ones naming the file and key, decodes the
//! dtypes embloom reads, and keeps the class-name table on top.
//!
//! The format holds numbers only. Text columns (class names, origins, string ids or groups)
//! are therefore written as I64 codes with the code → name table stored as a JSON array in
//! the header's `__metadata__` under `"<key>.names"`; the reader applies such a table when it
//! finds one, so embloom's own exports read back with their names.

use std::collections::{BTreeMap, HashMap};
use std::io::Write;
use std::path::Path;

use safetensors::tensor::{Dtype, SafeTensorError, SafeTensors, TensorView};

use super::ReadOptions;
use super::assemble::Parts;
use super::export::{Column, Export, Matrix};
use super::tensor::{Keyed, Tensor, Values, keyed_parts};
use crate::error::{Error, Result};

const FIX: &str = "rewrite the file with the safetensors library";

struct File<'a> {
    path: &'a Path,
    tensors: SafeTensors<'a>,
    meta: HashMap<String, String>,
}

fn bad(path: &Path, key: &str, detail: impl Into<String>) -> Error {
    Error::input_at(path, format!("key '{key}'"), detail, FIX)
}

/// The crate's refusal, in the words the rest of embloom uses for the same faults.
fn refused(path: &Path, bytes: &[u8], e: SafeTensorError) -> Error {
    let n = bytes
        .get(..8)
        .map(|b| u64::from_le_bytes(b.try_into().unwrap_or([0; 8])));
    match e {
        SafeTensorError::HeaderTooSmall => {
            Error::input(path, "too short for a .safetensors file", FIX)
        }
        SafeTensorError::HeaderTooLarge | SafeTensorError::InvalidHeaderLength => Error::input(
            path,
            format!(
                "header length {} exceeds the file ({} bytes)",
                n.unwrap_or(0),
                bytes.len()
            ),
            FIX,
        ),
        SafeTensorError::InvalidHeader(e) => {
            Error::input(path, format!("header is not a JSON object: {e}"), FIX)
        }
        SafeTensorError::InvalidHeaderDeserialization(e) | SafeTensorError::JsonError(e) => {
            Error::input(path, format!("header is not a JSON object: {e}"), FIX)
        }
        SafeTensorError::InvalidOffset(key) => bad(
            path,
            &key,
            "data_offsets fall outside the data bytes or overlap another tensor",
        ),
        SafeTensorError::MetadataIncompleteBuffer => Error::input(
            path,
            "the tensors' data_offsets fall outside the data bytes (or leave some uncovered)",
            FIX,
        ),
        SafeTensorError::TensorInvalidInfo
        | SafeTensorError::ValidationOverflow
        | SafeTensorError::MisalignedSlice => Error::input(
            path,
            "a tensor's shape and dtype do not match its data bytes",
            FIX,
        ),
        other => Error::input(
            path,
            format!("not a readable .safetensors file: {other}"),
            FIX,
        ),
    }
}

impl File<'_> {
    fn keys(&self) -> Vec<String> {
        let mut keys: Vec<String> = self.tensors.names().into_iter().map(String::from).collect();
        keys.sort();
        keys
    }

    fn has(&self, key: &str) -> bool {
        self.tensors.tensor(key).is_ok()
    }

    fn names_for(&self, key: &str) -> Option<Vec<String>> {
        let text = self.meta.get(&format!("{key}.names"))?;
        serde_json::from_str(text).ok()
    }

    fn tensor(&self, key: &str) -> Result<Tensor> {
        let path = self.path;
        let Ok(view) = self.tensors.tensor(key) else {
            return Err(Error::input_at(
                path,
                format!("key '{key}'"),
                format!(
                    "no tensor '{key}'; tensors present: {}",
                    self.keys().join(", ")
                ),
                "pass the right key (`embeddings_key` / `labels_key`)",
            ));
        };
        let dtype = view.dtype();
        let shape = view.shape().to_vec();
        let bytes = view.data();
        macro_rules! each {
            ($t:ty, $n:literal) => {
                bytes.chunks_exact($n).map(|c| {
                    let mut w = [0u8; $n];
                    w.copy_from_slice(c);
                    <$t>::from_le_bytes(w)
                })
            };
        }
        let values = match dtype {
            Dtype::F16 => Values::F32(
                each!(u16, 2)
                    .map(|b| half::f16::from_bits(b).to_f32())
                    .collect(),
            ),
            Dtype::BF16 => Values::F32(
                each!(u16, 2)
                    .map(|b| half::bf16::from_bits(b).to_f32())
                    .collect(),
            ),
            Dtype::F32 => Values::F32(each!(f32, 4).collect()),
            Dtype::F64 => Values::F64(each!(f64, 8).collect()),
            Dtype::I8 => Values::Int(bytes.iter().map(|&b| i64::from(b as i8)).collect()),
            Dtype::U8 | Dtype::BOOL => Values::Int(bytes.iter().map(|&b| i64::from(b)).collect()),
            Dtype::I16 => Values::Int(each!(i16, 2).map(i64::from).collect()),
            Dtype::U16 => Values::Int(each!(u16, 2).map(i64::from).collect()),
            Dtype::I32 => Values::Int(each!(i32, 4).map(i64::from).collect()),
            Dtype::U32 => Values::Int(each!(u32, 4).map(i64::from).collect()),
            Dtype::I64 => Values::Int(each!(i64, 8).collect()),
            Dtype::U64 => Values::Int(
                each!(u64, 8)
                    .map(|v| {
                        i64::try_from(v).map_err(|_| {
                            bad(
                                path,
                                key,
                                format!("value {v} does not fit a signed 64-bit integer"),
                            )
                        })
                    })
                    .collect::<Result<_>>()?,
            ),
            other => return Err(bad(path, key, format!("dtype {other:?} is not supported"))),
        };
        let values = match (values, self.names_for(key)) {
            (Values::Int(codes), Some(names)) => Values::Text(
                codes
                    .iter()
                    .map(|&c| {
                        usize::try_from(c)
                            .ok()
                            .and_then(|c| names.get(c).cloned())
                            .ok_or_else(|| {
                                bad(
                                    path,
                                    key,
                                    format!("code {c} has no entry in __metadata__ '{key}.names'"),
                                )
                            })
                    })
                    .collect::<Result<_>>()?,
            ),
            (v, _) => v,
        };
        Ok(Tensor {
            shape,
            values,
            dtype: format!("{dtype:?}").to_ascii_lowercase(),
        })
    }

    fn optional(&self, key: &str) -> Result<Option<Tensor>> {
        if self.has(key) {
            self.tensor(key).map(Some)
        } else {
            Ok(None)
        }
    }
}

/// Reads the pieces of a dataset from a `.safetensors` file.
pub fn read(path: &Path, opts: &ReadOptions) -> Result<(Parts, super::assemble::Stored)> {
    let bytes = std::fs::read(path).map_err(|e| Error::io(path, e))?;
    let (_, metadata) = SafeTensors::read_metadata(&bytes).map_err(|e| refused(path, &bytes, e))?;
    let meta = metadata.metadata().clone().unwrap_or_default();
    let tensors = SafeTensors::deserialize(&bytes).map_err(|e| refused(path, &bytes, e))?;
    let mut f = File {
        path,
        tensors,
        meta,
    };
    keyed_parts(&mut f, path, opts)
}

/// Text → (codes in first-seen order, names).
fn codes(v: &[String]) -> (Vec<i64>, Vec<String>) {
    let mut names: Vec<String> = Vec::new();
    let mut index: BTreeMap<&str, i64> = BTreeMap::new();
    let codes = v
        .iter()
        .map(|s| {
            *index.entry(s).or_insert_with(|| {
                names.push(s.clone());
                names.len() as i64 - 1
            })
        })
        .collect();
    (codes, names)
}

/// Writes the export: embeddings in the input's float type (F16, BF16, F32 or F64), integer
/// columns I64, weight F32, text columns as I64 codes with their names in `__metadata__`.
pub fn write(out: &mut dyn Write, export: &Export<'_>) -> std::io::Result<()> {
    let half = |bits: Vec<u16>| bits.iter().flat_map(|v| v.to_le_bytes()).collect();
    let (dtype, body): (Dtype, Vec<u8>) = match &export.stored {
        Matrix::F16(x) => (Dtype::F16, half(Matrix::f16_bits(x))),
        Matrix::BF16(x) => (Dtype::BF16, half(Matrix::bf16_bits(x))),
        Matrix::F32(x) => (Dtype::F32, x.iter().flat_map(|v| v.to_le_bytes()).collect()),
        Matrix::F64(x) => (Dtype::F64, x.iter().flat_map(|v| v.to_le_bytes()).collect()),
    };
    let mut bodies: Vec<(String, Dtype, Vec<usize>, Vec<u8>)> = vec![(
        "embeddings".into(),
        dtype,
        export.stored.shape().to_vec(),
        body,
    )];
    let mut meta = HashMap::new();
    meta.insert("format".to_string(), "embloom".to_string());
    for (key, col) in &export.columns {
        let n = col.len();
        let (dtype, body) = match col {
            Column::Int(v) => (Dtype::I64, v.iter().flat_map(|c| c.to_le_bytes()).collect()),
            Column::F32(v) => (Dtype::F32, v.iter().flat_map(|c| c.to_le_bytes()).collect()),
            Column::Text(v) => {
                let (c, names) = codes(v);
                meta.insert(
                    format!("{key}.names"),
                    serde_json::to_string(&names).map_err(std::io::Error::other)?,
                );
                (Dtype::I64, c.iter().flat_map(|c| c.to_le_bytes()).collect())
            }
        };
        bodies.push((key.to_string(), dtype, vec![n], body));
    }
    let views = bodies
        .iter()
        .map(|(name, dtype, shape, body)| {
            TensorView::new(*dtype, shape.clone(), body)
                .map(|v| (name.clone(), v))
                .map_err(std::io::Error::other)
        })
        .collect::<std::io::Result<Vec<_>>>()?;
    let file = safetensors::serialize(views, Some(meta)).map_err(std::io::Error::other)?;
    out.write_all(&file)?;
    out.flush()
}

impl Keyed for File<'_> {
    fn get(&mut self, key: &str) -> Result<Tensor> {
        self.tensor(key)
    }
    fn get_optional(&mut self, key: &str) -> Result<Option<Tensor>> {
        self.optional(key)
    }
}
