//! Parquet and Arrow IPC (Feather v2) tables (feature `columnar`), through the arrow-rs
//! crates. The embeddings are one list column (`FixedSizeList` or `List` of floats, named by
//! the embeddings key) or every numeric column without a role; the label, id, group and fold
//! columns follow the CSV reader's rules (`csv::table`); every other column is carried to a
//! columnar output unchanged. Parquet files may be uncompressed or Snappy-compressed (the
//! pyarrow and pandas default); Arrow files uncompressed or LZ4 (the Feather default).

mod decode;
mod ipc_check;
mod read;
mod write;

use std::fs::File;
use std::path::Path;

use arrow_schema::ArrowError;
use parquet::arrow::ArrowWriter;
use parquet::arrow::arrow_reader::ParquetRecordBatchReaderBuilder;
use parquet::basic::Compression;
use parquet::file::properties::WriterProperties;

use super::ReadOptions;
use super::assemble::{Parts, Stored};
use super::carried::Carried;
use super::export::Export;
use crate::error::{Error, Result};

/// Rows per record batch, read and written: large enough that per-batch costs vanish, small
/// enough that the memory check after each batch refuses an oversized file early.
const BATCH_ROWS: usize = 8192;

fn unreadable(path: &Path, what: &str, e: impl std::fmt::Display) -> Error {
    let e = e.to_string();
    // A codec left out of the build (see the module doc) is the user's to change, not a
    // broken file.
    let codec = if what == "Parquet" { "snappy" } else { "lz4" };
    let fix = if ["Disabled feature", "not supported", "requires the"]
        .iter()
        .any(|m| e.contains(m))
    {
        format!(
            "embloom reads {what} files uncompressed or with {codec}: rewrite the file with compression='{codec}' (pyarrow, pandas)"
        )
    } else {
        format!("rewrite the file with pyarrow (a {what} file written by pyarrow or pandas reads)")
    };
    Error::input(path, format!("not a readable {what} file: {e}"), fix)
}

/// Reads the pieces of a dataset from a Parquet file.
pub fn read_parquet(path: &Path, opts: &ReadOptions) -> Result<(Parts, Stored)> {
    let file = File::open(path).map_err(|e| Error::io(path, e))?;
    let builder = ParquetRecordBatchReaderBuilder::try_new(file)
        .map_err(|e| unreadable(path, "Parquet", e))?;
    let schema = builder.schema().clone();
    let reader = builder
        .with_batch_size(BATCH_ROWS)
        .build()
        .map_err(|e| unreadable(path, "Parquet", e))?;
    let batches = reader.map(|b| b.map_err(|e| unreadable(path, "Parquet", e)));
    read::read(path, schema, batches, opts)
}

/// Reads the pieces of a dataset from an Arrow IPC file (Feather v2).
pub fn read_ipc(path: &Path, opts: &ReadOptions) -> Result<(Parts, Stored)> {
    let bytes = std::fs::read(path).map_err(|e| Error::io(path, e))?;
    ipc_check::check(path, &bytes)?;
    // arrow-ipc still asserts on some malformed buffers (a length that is not a whole number
    // of values) where it should return an error; such a file is refused like any other
    // unreadable one. The decoded values are dropped with the unwind, so nothing half-read
    // survives it.
    let decode = std::panic::AssertUnwindSafe(|| {
        let reader = arrow_ipc::reader::FileReader::try_new(std::io::Cursor::new(bytes), None)
            .map_err(|e| unreadable(path, "Arrow IPC", e))?;
        let schema = reader.schema();
        let batches = reader.map(|b| b.map_err(|e| unreadable(path, "Arrow IPC", e)));
        read::read(path, schema, batches, opts)
    });
    std::panic::catch_unwind(decode).unwrap_or_else(|_| {
        Err(unreadable(
            path,
            "Arrow IPC",
            "its buffers do not match its schema",
        ))
    })
}

fn write_error(tmp: &Path, e: impl std::fmt::Display) -> Error {
    Error::output(
        tmp,
        format!("cannot write the table: {e}"),
        "check free space and permissions, and rename any input column that clashes with one embloom writes",
    )
}

/// Which rows are real (their carried values are the input's), from the `origin` column.
fn real_rows(export: &Export<'_>) -> Vec<bool> {
    export
        .columns
        .iter()
        .find_map(|(k, c)| match c {
            super::export::Column::Text(v) if *k == "origin" => {
                Some(v.iter().map(|o| o == "real").collect())
            }
            _ => None,
        })
        .unwrap_or_default()
}

/// Writes the export as a Snappy-compressed Parquet file at `tmp`.
pub fn write_parquet(tmp: &Path, export: &Export<'_>, carried: Option<&Carried>) -> Result<()> {
    let batch =
        write::batch(export, carried, &real_rows(export)).map_err(|e| write_error(tmp, e))?;
    let file = File::create(tmp).map_err(|e| Error::io(tmp, e))?;
    let props = WriterProperties::builder()
        .set_compression(Compression::SNAPPY)
        .set_max_row_group_row_count(Some(BATCH_ROWS * 16))
        .build();
    let mut w =
        ArrowWriter::try_new(file, batch.schema(), Some(props)).map_err(|e| write_error(tmp, e))?;
    let mut start = 0;
    while start < batch.num_rows() {
        let len = BATCH_ROWS.min(batch.num_rows() - start);
        w.write(&batch.slice(start, len))
            .map_err(|e| write_error(tmp, e))?;
        start += len;
    }
    w.close().map_err(|e| write_error(tmp, e))?;
    Ok(())
}

/// Writes the export as an uncompressed Arrow IPC file (Feather v2) at `tmp`.
pub fn write_ipc(tmp: &Path, export: &Export<'_>, carried: Option<&Carried>) -> Result<()> {
    let batch =
        write::batch(export, carried, &real_rows(export)).map_err(|e| write_error(tmp, e))?;
    let file = File::create(tmp).map_err(|e| Error::io(tmp, e))?;
    let mut w = arrow_ipc::writer::FileWriter::try_new_buffered(file, &batch.schema())
        .map_err(|e| write_error(tmp, e))?;
    let mut start = 0;
    while start < batch.num_rows() {
        let len = BATCH_ROWS.min(batch.num_rows() - start);
        w.write(&batch.slice(start, len))
            .map_err(|e: ArrowError| write_error(tmp, e))?;
        start += len;
    }
    w.finish().map_err(|e| write_error(tmp, e))?;
    w.into_inner()
        .and_then(|mut b| std::io::Write::flush(&mut b).map_err(ArrowError::from))
        .map_err(|e| write_error(tmp, e))?;
    Ok(())
}
