//! `.safetensors`: an 8-byte little-endian header length, a JSON header mapping tensor names
//! to dtype, shape and byte offsets, then the raw little-endian data. Parsed by hand with
//! every length and offset checked against the file before use.
//!
//! The format holds numbers only. Text columns (class names, origins, string ids or groups)
//! are therefore written as I64 codes with the code → name table stored as a JSON array in
//! the header's `__metadata__` under `"<key>.names"`; the reader applies such a table when it
//! finds one, so embloom's own exports read back with their names.

use std::collections::BTreeMap;
use std::io::Write;
use std::path::Path;

use serde_json::{Map, Value, json};

use super::ReadOptions;
use super::assemble::Parts;
use super::export::{Column, Export};
use super::tensor::{Keyed, Tensor, Values, keyed_parts};
use crate::error::{Error, Result};

/// Headers larger than this are refused (the reference implementation uses the same 100 MB cap).
const MAX_HEADER: u64 = 100_000_000;

struct File<'a> {
    path: &'a Path,
    header: Map<String, Value>,
    data: &'a [u8],
}

fn bad(path: &Path, key: &str, detail: impl Into<String>) -> Error {
    Error::input_at(
        path,
        format!("key '{key}'"),
        detail,
        "rewrite the file with the safetensors library",
    )
}

impl File<'_> {
    fn keys(&self) -> Vec<String> {
        self.header
            .keys()
            .filter(|k| *k != "__metadata__")
            .cloned()
            .collect()
    }

    fn has(&self, key: &str) -> bool {
        key != "__metadata__" && self.header.contains_key(key)
    }

    fn names_for(&self, key: &str) -> Option<Vec<String>> {
        let meta = self.header.get("__metadata__")?.as_object()?;
        let text = meta.get(&format!("{key}.names"))?.as_str()?;
        serde_json::from_str(text).ok()
    }

    fn tensor(&self, key: &str) -> Result<Tensor> {
        let path = self.path;
        let entry = match self.header.get(key) {
            Some(e) if self.has(key) => e,
            _ => {
                return Err(Error::input_at(
                    path,
                    format!("key '{key}'"),
                    format!(
                        "no tensor '{key}'; tensors present: {}",
                        self.keys().join(", ")
                    ),
                    "pass the right key (--embeddings-key / --labels-key)",
                ));
            }
        };
        let dtype = entry
            .get("dtype")
            .and_then(Value::as_str)
            .ok_or_else(|| bad(path, key, "tensor has no dtype"))?;
        let shape: Vec<usize> = entry
            .get("shape")
            .and_then(Value::as_array)
            .ok_or_else(|| bad(path, key, "tensor has no shape"))?
            .iter()
            .map(|d| {
                d.as_u64()
                    .and_then(|d| usize::try_from(d).ok())
                    .ok_or_else(|| bad(path, key, "shape holds a non-integer"))
            })
            .collect::<Result<_>>()?;
        let offs = entry
            .get("data_offsets")
            .and_then(Value::as_array)
            .ok_or_else(|| bad(path, key, "tensor has no data_offsets"))?;
        let (begin, end) = match offs.as_slice() {
            [b, e] => (
                b.as_u64().and_then(|v| usize::try_from(v).ok()),
                e.as_u64().and_then(|v| usize::try_from(v).ok()),
            ),
            _ => (None, None),
        };
        let (begin, end) = match (begin, end) {
            (Some(b), Some(e)) if b <= e && e <= self.data.len() => (b, e),
            _ => {
                return Err(bad(
                    path,
                    key,
                    format!(
                        "data_offsets {offs:?} fall outside the {} data bytes",
                        self.data.len()
                    ),
                ));
            }
        };
        let size = match dtype {
            "F16" | "BF16" | "I16" | "U16" => 2,
            "F32" | "I32" | "U32" => 4,
            "F64" | "I64" | "U64" => 8,
            "I8" | "U8" | "BOOL" => 1,
            other => return Err(bad(path, key, format!("dtype {other} is not supported"))),
        };
        let count = shape.iter().try_fold(1usize, |a, &d| a.checked_mul(d));
        if count.and_then(|c| c.checked_mul(size)) != Some(end - begin) {
            return Err(bad(
                path,
                key,
                format!(
                    "shape {shape:?} of {dtype} does not match its {} data bytes",
                    end - begin
                ),
            ));
        }
        let bytes = &self.data[begin..end];
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
            "F16" => Values::F32(
                each!(u16, 2)
                    .map(|b| half::f16::from_bits(b).to_f32())
                    .collect(),
            ),
            "BF16" => Values::F32(
                each!(u16, 2)
                    .map(|b| half::bf16::from_bits(b).to_f32())
                    .collect(),
            ),
            "F32" => Values::F32(each!(f32, 4).collect()),
            "F64" => Values::F64(each!(f64, 8).collect()),
            "I8" => Values::Int(bytes.iter().map(|&b| i64::from(b as i8)).collect()),
            "U8" | "BOOL" => Values::Int(bytes.iter().map(|&b| i64::from(b)).collect()),
            "I16" => Values::Int(each!(i16, 2).map(i64::from).collect()),
            "U16" => Values::Int(each!(u16, 2).map(i64::from).collect()),
            "I32" => Values::Int(each!(i32, 4).map(i64::from).collect()),
            "U32" => Values::Int(each!(u32, 4).map(i64::from).collect()),
            "I64" => Values::Int(each!(i64, 8).collect()),
            _ => Values::Int(
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
            dtype: dtype.to_ascii_lowercase(),
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
pub fn read(path: &Path, opts: &ReadOptions) -> Result<Parts> {
    let bytes = std::fs::read(path).map_err(|e| Error::io(path, e))?;
    let fix = "rewrite the file with the safetensors library";
    if bytes.len() < 8 {
        return Err(Error::input(path, "too short for a .safetensors file", fix));
    }
    let mut len8 = [0u8; 8];
    len8.copy_from_slice(&bytes[..8]);
    let n = u64::from_le_bytes(len8);
    if n > MAX_HEADER || n > (bytes.len() - 8) as u64 {
        return Err(Error::input(
            path,
            format!("header length {n} exceeds the file ({} bytes)", bytes.len()),
            fix,
        ));
    }
    let end = 8 + n as usize;
    let header: Map<String, Value> = serde_json::from_slice(&bytes[8..end])
        .map_err(|e| Error::input(path, format!("header is not a JSON object: {e}"), fix))?;
    let mut f = File {
        path,
        header,
        data: &bytes[end..],
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

/// Writes the export: embeddings F32, integer columns I64, weight F32, text columns as I64
/// codes with their names in `__metadata__`.
pub fn write(out: &mut dyn Write, export: &Export<'_>) -> std::io::Result<()> {
    let x = export.x;
    let mut tensors: Vec<(String, &str, Vec<usize>, Vec<u8>)> = vec![(
        "embeddings".into(),
        "F32",
        vec![x.nrows(), x.ncols()],
        x.iter().flat_map(|v| v.to_le_bytes()).collect(),
    )];
    let mut meta = Map::new();
    meta.insert("format".into(), json!("embloom"));
    for (key, col) in &export.columns {
        let n = col.len();
        let (dtype, body) = match col {
            Column::Int(v) => ("I64", v.iter().flat_map(|c| c.to_le_bytes()).collect()),
            Column::F32(v) => ("F32", v.iter().flat_map(|c| c.to_le_bytes()).collect()),
            Column::Text(v) => {
                let (c, names) = codes(v);
                meta.insert(
                    format!("{key}.names"),
                    Value::String(serde_json::to_string(&names).map_err(std::io::Error::other)?),
                );
                ("I64", c.iter().flat_map(|c| c.to_le_bytes()).collect())
            }
        };
        tensors.push((key.to_string(), dtype, vec![n], body));
    }
    let mut header = Map::new();
    header.insert("__metadata__".into(), Value::Object(meta));
    let mut offset = 0usize;
    for (name, dtype, shape, body) in &tensors {
        header.insert(
            name.clone(),
            json!({"dtype": dtype, "shape": shape, "data_offsets": [offset, offset + body.len()]}),
        );
        offset += body.len();
    }
    let mut text = serde_json::to_string(&Value::Object(header)).map_err(std::io::Error::other)?;
    // Pad with spaces so the data starts 8-byte aligned, as the reference writer does.
    while text.len() % 8 != 0 {
        text.push(' ');
    }
    out.write_all(&(text.len() as u64).to_le_bytes())?;
    out.write_all(text.as_bytes())?;
    for (_, _, _, body) in &tensors {
        out.write_all(body)?;
    }
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
