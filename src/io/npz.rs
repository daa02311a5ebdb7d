//! `.npz`: a zip archive of `.npy` members, as `np.savez` (stored) and `np.savez_compressed`
//! (deflated) write it. Members are picked by key; the optional `id`, `group` and fold
//! members ride along when present.

use std::fs::File;
use std::io::{Read, Write};
use std::path::Path;

use zip::ZipArchive;
use zip::write::SimpleFileOptions;

use super::ReadOptions;
use super::assemble::Parts;
use super::export::{Column, Export, Matrix};
use super::npy::{self, Payload};
use super::tensor::{Keyed, Tensor, keyed_parts};
use crate::error::{Error, Result};

fn zip_error(path: &Path, e: zip::result::ZipError) -> Error {
    Error::input(
        path,
        format!("not a readable .npz (zip) archive: {e}"),
        "rewrite the file with numpy.savez or numpy.savez_compressed",
    )
}

struct Archive<'a> {
    path: &'a Path,
    zip: ZipArchive<File>,
    keys: Vec<String>,
}

impl Archive<'_> {
    fn has(&self, key: &str) -> bool {
        self.keys.iter().any(|k| k == key)
    }

    fn member(&mut self, key: &str) -> Result<Tensor> {
        if !self.has(key) {
            return Err(Error::input_at(
                self.path,
                format!("key '{key}'"),
                format!(
                    "no member '{key}'; members present: {}",
                    self.keys.join(", ")
                ),
                "pass the right key (`embeddings_key` / `labels_key`) or rewrite the archive",
            ));
        }
        let name = format!("{key}.npy");
        let path = self.path;
        let mut entry = self.zip.by_name(&name).map_err(|e| zip_error(path, e))?;
        let declared = entry.size();
        // What the archive can vouch for: a stored member's bytes are all in the file; a
        // deflated one's declared size may lie, so only its compressed size is reserved up front.
        let archive_len = std::fs::metadata(path).map_or(0, |m| m.len());
        let prealloc = declared.min(entry.compressed_size()).min(archive_len);
        let disagree = || {
            Error::input_at(
                path,
                format!("key '{key}'"),
                "member size disagrees with the archive directory",
                "rewrite the archive",
            )
        };
        // Never read past the declared size: a lying archive cannot make us allocate more.
        let mut limited = (&mut entry).take(declared.saturating_add(1));
        let io_err = |e: std::io::Error| {
            if e.kind() == std::io::ErrorKind::UnexpectedEof {
                disagree()
            } else {
                Error::input_at(
                    path,
                    format!("key '{key}'"),
                    format!("cannot decompress member: {e}"),
                    "rewrite the archive",
                )
            }
        };
        // A refusal from the header check stands on its own: nothing more is inflated.
        let tensor = npy::decode_stream(&mut limited, declared, prealloc, path, key, &io_err)?;
        let tensor = Ok(tensor);
        // A member that holds more than it declares (or fewer bytes, caught as an early end).
        let mut extra = [0u8; 1];
        match limited.read(&mut extra) {
            Ok(0) => tensor,
            Ok(_) => Err(disagree()),
            Err(e) => Err(io_err(e)),
        }
    }

    fn optional(&mut self, key: &str) -> Result<Option<Tensor>> {
        if self.has(key) {
            self.member(key).map(Some)
        } else {
            Ok(None)
        }
    }
}

/// Reads the pieces of a dataset from an `.npz` archive.
pub fn read(path: &Path, opts: &ReadOptions) -> Result<(Parts, super::assemble::Stored)> {
    let file = File::open(path).map_err(|e| Error::io(path, e))?;
    let zip = ZipArchive::new(file).map_err(|e| zip_error(path, e))?;
    let keys = zip
        .file_names()
        .filter_map(|n| n.strip_suffix(".npy"))
        .map(str::to_string)
        .collect::<Vec<_>>();
    let mut keys = keys;
    keys.sort();
    let mut ar = Archive { path, zip, keys };
    keyed_parts(&mut ar, path, opts)
}

/// Writes an uncompressed archive `np.load` reads: one `.npy` member per column, the
/// embeddings in the input's float type (bfloat16, which numpy lacks, as float32: exact).
pub fn write(out: File, export: &Export<'_>) -> std::io::Result<()> {
    let mut zip = zip::ZipWriter::new(std::io::BufWriter::new(out));
    let opts = SimpleFileOptions::default()
        .compression_method(zip::CompressionMethod::Stored)
        .large_file(true);
    let mut members = Vec::new();
    for (name, col) in &export.columns {
        let n = col.len();
        let img = match col {
            Column::Int(v) => npy::encode(&[n], Payload::I64(v)),
            Column::F32(v) => npy::encode(&[n], Payload::F32(v)),
            Column::Text(v) => npy::encode(&[n], Payload::Text(v)),
        };
        members.push((name.to_string(), img));
    }
    let mut body = || -> std::io::Result<()> {
        zip.start_file("embeddings.npy", opts).map_err(zip_io)?;
        write_matrix(&mut zip, &export.stored)?;
        for (name, img) in &members {
            zip.start_file(format!("{name}.npy"), opts)
                .map_err(zip_io)?;
            zip.write_all(img)?;
        }
        Ok(())
    };
    if let Err(e) = body() {
        // Dropping an unfinished writer makes the zip crate try to finish it and print
        // "ZipWriter drop failed" on its own; the caller reports `e` and removes the file.
        std::mem::forget(zip);
        return Err(e);
    }
    zip.finish().map_err(zip_io)?.flush()
}

/// The embeddings as one `.npy` image, a row at a time: the matrix is the largest thing a
/// grown set holds, so its bytes are never gathered into a second full copy.
fn write_matrix(out: &mut impl Write, stored: &Matrix<'_>) -> std::io::Result<()> {
    let shape = stored.shape();
    let descr = match stored {
        Matrix::F16(_) => "<f2",
        Matrix::BF16(_) | Matrix::F32(_) => "<f4",
        Matrix::F64(_) => "<f8",
    };
    out.write_all(&npy::header(&shape, descr))?;
    let mut bytes = Vec::new();
    let mut put = |row_bytes: &mut dyn Iterator<Item = u8>| {
        bytes.clear();
        bytes.extend(row_bytes);
        out.write_all(&bytes)
    };
    match stored {
        Matrix::F16(x) => {
            for row in x.rows() {
                put(&mut row
                    .iter()
                    .flat_map(|&v| half::f16::from_f32(v).to_bits().to_le_bytes()))?;
            }
        }
        Matrix::BF16(x) | Matrix::F32(x) => {
            for row in x.rows() {
                put(&mut row.iter().flat_map(|v| v.to_le_bytes()))?;
            }
        }
        Matrix::F64(x) => {
            for row in x.rows() {
                put(&mut row.iter().flat_map(|v| v.to_le_bytes()))?;
            }
        }
    }
    Ok(())
}

/// The OS error inside a zip error as it is, so a message says "No space left on device"
/// once, not wrapped in the zip crate's own wording.
fn zip_io(e: zip::result::ZipError) -> std::io::Error {
    match e {
        zip::result::ZipError::Io(e) => e,
        other => std::io::Error::other(other),
    }
}

impl Keyed for Archive<'_> {
    fn get(&mut self, key: &str) -> Result<Tensor> {
        self.member(key)
    }
    fn get_optional(&mut self, key: &str) -> Result<Option<Tensor>> {
        self.optional(key)
    }
}
