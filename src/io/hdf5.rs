//! HDF5 files (feature `hdf5`): datasets picked by path inside the file ("feats/emb" works),
//! any chunking or gzip compression as h5py writes it (the HDF5 library applies the filters).

use std::path::Path;
use std::str::FromStr;

use ::hdf5::types::{
    FixedAscii, FixedUnicode, FloatSize, TypeDescriptor, VarLenAscii, VarLenUnicode,
};
use ::hdf5::{Dataset, File, Group};
use ndarray::{ArrayView1, ArrayView2};

use super::ReadOptions;
use super::assemble::Parts;
use super::export::{Column, Export, Matrix};
use super::tensor::{Keyed, Tensor, Values, keyed_parts};
use crate::error::{Error, Result};

fn h5_error(path: &Path, key: &str, e: ::hdf5::Error) -> Error {
    Error::input_at(
        path,
        format!("key '{key}'"),
        format!("HDF5 error: {e}"),
        "check the file with h5dump, or rewrite it with h5py",
    )
}

/// Every dataset path in the file, for "key not found" messages.
fn dataset_paths(g: &Group, prefix: &str, out: &mut Vec<String>, depth: usize) {
    let Ok(names) = g.member_names() else { return };
    for n in names {
        let full = if prefix.is_empty() {
            n.clone()
        } else {
            format!("{prefix}/{n}")
        };
        if let Ok(sub) = g.group(&n) {
            if depth < 8 {
                dataset_paths(&sub, &full, out, depth + 1);
            }
        } else if g.dataset(&n).is_ok() {
            out.push(full);
        }
    }
}

/// Reads fixed-width strings through a wider fixed type (HDF5 converts between widths).
fn fixed_strings(ds: &Dataset, width: usize, unicode: bool) -> ::hdf5::Result<Vec<Vec<u8>>> {
    macro_rules! via {
        ($n:literal) => {
            if unicode {
                ds.read_raw::<FixedUnicode<$n>>()?
                    .iter()
                    .map(|s| s.as_bytes().to_vec())
                    .collect()
            } else {
                ds.read_raw::<FixedAscii<$n>>()?
                    .iter()
                    .map(|s| s.as_bytes().to_vec())
                    .collect()
            }
        };
    }
    Ok(match width {
        0..=16 => via!(16),
        17..=64 => via!(64),
        65..=256 => via!(256),
        _ => via!(1024),
    })
}

fn tensor(file: &File, path: &Path, key: &str) -> Result<Tensor> {
    let ds = match file.dataset(key) {
        Ok(ds) => ds,
        Err(_) => {
            let mut present = Vec::new();
            dataset_paths(file, "", &mut present, 0);
            return Err(Error::input_at(
                path,
                format!("key '{key}'"),
                format!(
                    "no dataset '{key}'; datasets present: {}",
                    present.join(", ")
                ),
                "pass the right dataset path (`embeddings_key` / `labels_key`), e.g. feats/emb",
            ));
        }
    };
    let e = |err| h5_error(path, key, err);
    let shape = ds.shape();
    let desc = ds.dtype().and_then(|t| t.to_descriptor()).map_err(e)?;
    let (values, dtype) = match &desc {
        TypeDescriptor::Float(FloatSize::U2) => (
            Values::F32(
                ds.read_raw::<half::f16>()
                    .map_err(e)?
                    .into_iter()
                    .map(f32::from)
                    .collect(),
            ),
            "f16".into(),
        ),
        TypeDescriptor::Float(FloatSize::U4) => {
            (Values::F32(ds.read_raw::<f32>().map_err(e)?), "f32".into())
        }
        TypeDescriptor::Float(FloatSize::U8) => {
            (Values::F64(ds.read_raw::<f64>().map_err(e)?), "f64".into())
        }
        TypeDescriptor::Integer(_) | TypeDescriptor::Boolean => (
            Values::Int(ds.read_raw::<i64>().map_err(e)?),
            desc.to_string(),
        ),
        TypeDescriptor::Unsigned(_) => {
            let raw = ds.read_raw::<u64>().map_err(e)?;
            let v = raw
                .into_iter()
                .enumerate()
                .map(|(row, v)| {
                    i64::try_from(v).map_err(|_| {
                        Error::input_at(
                            path,
                            format!("key '{key}', row {row}"),
                            format!("value {v} does not fit a signed 64-bit integer"),
                            "store smaller integers",
                        )
                    })
                })
                .collect::<Result<_>>()?;
            (Values::Int(v), desc.to_string())
        }
        TypeDescriptor::VarLenUnicode => (
            Values::Text(
                ds.read_raw::<VarLenUnicode>()
                    .map_err(e)?
                    .iter()
                    .map(|s| s.as_str().to_string())
                    .collect(),
            ),
            "str".into(),
        ),
        TypeDescriptor::VarLenAscii => {
            let raw = ds.read_raw::<VarLenAscii>().map_err(e)?;
            let v = raw
                .iter()
                .enumerate()
                .map(|(row, s)| utf8(s.as_bytes(), path, key, row))
                .collect::<Result<_>>()?;
            (Values::Text(v), "str".into())
        }
        TypeDescriptor::FixedAscii(w) | TypeDescriptor::FixedUnicode(w) => {
            if *w > 1024 {
                return Err(Error::input_at(
                    path,
                    format!("key '{key}'"),
                    format!("fixed-length strings of {w} bytes are wider than the 1024 supported"),
                    "store the strings as variable-length (h5py.string_dtype())",
                ));
            }
            let unicode = matches!(desc, TypeDescriptor::FixedUnicode(_));
            let raw = fixed_strings(&ds, *w, unicode).map_err(e)?;
            let v = raw
                .into_iter()
                .enumerate()
                .map(|(row, b)| {
                    let end = b.iter().rposition(|&c| c != 0).map_or(0, |p| p + 1);
                    utf8(&b[..end], path, key, row)
                })
                .collect::<Result<_>>()?;
            (Values::Text(v), format!("S{w}"))
        }
        other => {
            return Err(Error::input_at(
                path,
                format!("key '{key}'"),
                format!("element type {other} is not supported"),
                "store numbers or strings",
            ));
        }
    };
    Ok(Tensor {
        shape,
        values,
        dtype,
    })
}

/// Reads the pieces of a dataset from an HDF5 file.
pub fn read(path: &Path, opts: &ReadOptions) -> Result<(Parts, super::assemble::Stored)> {
    let file = File::open(path).map_err(|e| {
        Error::input(
            path,
            format!("not a readable HDF5 file: {e}"),
            "check the file with h5dump",
        )
    })?;
    keyed_parts(&mut Opened { file: &file, path }, path, opts)
}

/// An open HDF5 file and its path, for [`keyed_parts`].
struct Opened<'a> {
    file: &'a File,
    path: &'a Path,
}

impl Keyed for Opened<'_> {
    fn get(&mut self, key: &str) -> Result<Tensor> {
        tensor(self.file, self.path, key)
    }
    fn get_optional(&mut self, key: &str) -> Result<Option<Tensor>> {
        if self.file.dataset(key).is_ok() {
            tensor(self.file, self.path, key).map(Some)
        } else {
            Ok(None)
        }
    }
}

/// Writes the export: `embeddings` in the input's float type (bfloat16, which HDF5 has no
/// standard type for, as f32: exact), integer columns (i64), `weight` (f32) and text columns
/// as variable-length UTF-8 strings.
pub fn write(tmp: &Path, export: &Export<'_>) -> Result<()> {
    let e = |err: ::hdf5::Error| {
        Error::output(
            tmp,
            format!("HDF5 error: {err}"),
            "check free space and permissions",
        )
    };
    let file = File::create(tmp).map_err(e)?;
    let b = file.new_dataset_builder();
    match &export.stored {
        Matrix::F16(x) => b
            .with_data(x.mapv(half::f16::from_f32).view())
            .create("embeddings"),
        Matrix::BF16(x) | Matrix::F32(x) => {
            let x: ArrayView2<f32> = x.view();
            b.with_data(x).create("embeddings")
        }
        Matrix::F64(x) => b.with_data(x.view()).create("embeddings"),
    }
    .map_err(e)?;
    for (key, col) in &export.columns {
        let b = file.new_dataset_builder();
        match col {
            Column::Int(v) => b
                .with_data(ArrayView1::from(v.as_slice()))
                .create(key.as_str()),
            Column::F32(v) => b
                .with_data(ArrayView1::from(v.as_slice()))
                .create(key.as_str()),
            Column::Text(v) => {
                let s = v
                    .iter()
                    .map(|s| {
                        VarLenUnicode::from_str(s).map_err(|err| {
                            Error::output(
                                tmp,
                                format!("{key}: {err}"),
                                "remove NUL characters from the strings",
                            )
                        })
                    })
                    .collect::<Result<Vec<_>>>()?;
                b.with_data(ArrayView1::from(s.as_slice()))
                    .create(key.as_str())
            }
        }
        .map_err(e)?;
    }
    file.close().map_err(e)
}

/// A string of a text dataset, refused with its row when it is not UTF-8.
fn utf8(bytes: &[u8], path: &Path, key: &str, row: usize) -> Result<String> {
    String::from_utf8(bytes.to_vec()).map_err(|_| {
        Error::input_at(
            path,
            format!("key '{key}', row {row}"),
            "string is not UTF-8",
            "store UTF-8 strings",
        )
    })
}
