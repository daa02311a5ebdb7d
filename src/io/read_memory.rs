//! What reading a file holds beside the decoded matrix, for the memory estimate checked
//! before any work (`crate::memory` adds the stages up).

use std::path::Path;

use super::Format;
use crate::data::FloatType;

/// Bytes per row the streaming CSV reader keeps beside the matrix: its line number, its byte
/// offset, its label code, and room for one text role (an id or group `String`: a 24-byte
/// header plus a heap block the allocator rounds up to 32 bytes).
const CSV_ROW: u64 = 8 + 8 + 4 + 56;

/// Peak bytes of the reader's staging while it decodes `path` into a `rows × dims` f32
/// matrix: the parsed text for CSV/TSV, else about one decoded-size image (npz members are
/// decompressed into memory; the other formats are read whole; HDF5 decodes in place of the
/// matrix size; Parquet and Arrow hold their batches and one concatenated copy). The matrix
/// itself is not included. For f64 input, npy, npz and HDF5 decode into the kept f64 values
/// themselves, which the estimate counts apart.
pub fn read_staging_bytes(path: &Path, rows: usize, dims: usize, stored: FloatType) -> u64 {
    let file = std::fs::metadata(path).map(|m| m.len()).unwrap_or(0);
    let x = (rows as u64).saturating_mul(dims as u64).saturating_mul(4);
    // Parquet and Arrow: the record batches in the stored type, then their concatenation.
    let batches = x.saturating_mul(2).saturating_mul(stored.bytes() as u64) / 4;
    match Format::of(path) {
        Ok(Format::Csv) | Ok(Format::Tsv) => (rows as u64).saturating_mul(CSV_ROW),
        Ok(Format::Npy) | Ok(Format::Npz) | Ok(Format::Hdf5) if stored == FloatType::F64 => 0,
        Ok(Format::Hdf5) => x,
        Ok(Format::Parquet) => batches,
        // An Arrow file is also read whole first, for its range check.
        Ok(Format::Arrow) => batches.saturating_add(file),
        _ => file.max(x),
    }
}
