//! Memory estimates, so that a command too big for the machine is refused with a suggestion
//! instead of being killed by the kernel halfway through.
//!
//! The model counts the large buffers each stage holds at once (matrices of f32, parsed CSV
//! fields, the export image) and takes the largest stage; small per-row bookkeeping is folded
//! into a per-row allowance and a fixed runtime allowance. Each stage's own figure lives
//! beside the code that allocates it (the reader's staging in `io`, the neighbour search in
//! `neighbors`, PCA fits in `pca`, the linear probe in `probe`, fold copies and fold records in `assess`); this
//! module only adds them up. It is checked against the measured peak (VmHWM) in
//! tests/cli/hardening_memory.rs.

use std::path::Path;

use crate::assess::results::FoldRecord;
use crate::data::FloatType;
use crate::error::{Error, Limit, LimitSource, Result};
use crate::io::{Format, read_staging_bytes};
use crate::neighbors::search_peak_bytes;
use crate::pca::Pca;
use crate::probe::LinearProbe;

/// Fixed allowance: the binary, thread stacks, allocator arenas, small tables.
const RUNTIME: u64 = 24 << 20;
/// Per-row bookkeeping (labels, provenance, origin strings, ids) of an output set.
const ROW_EXTRA: u64 = 96;

/// An estimate of peak memory and the stage/parts that make it up.
#[derive(Debug, Clone, PartialEq)]
pub struct Estimate {
    /// The estimated peak, in bytes: the sum of `parts`.
    pub bytes: u64,
    /// Each stage or part by name, in bytes, for the message that explains a refusal.
    pub parts: Vec<(String, u64)>,
}

impl Estimate {
    fn of(parts: Vec<(String, u64)>) -> Estimate {
        Estimate {
            bytes: parts.iter().map(|(_, b)| *b).sum(),
            parts,
        }
    }

    /// The larger of two stage estimates (stages do not overlap in time).
    fn max(self, other: Estimate) -> Estimate {
        if other.bytes > self.bytes {
            other
        } else {
            self
        }
    }

    /// Add the per-fold records that `assess` keeps until the report is written: one per
    /// repeat × fold × method × probe ([`FoldRecord::estimated_bytes`]).
    pub fn with_fold_records(mut self, records: usize, classes: usize) -> Estimate {
        let bytes = (records as u64).saturating_mul(FoldRecord::estimated_bytes(classes));
        self.parts.push(("fold records".into(), bytes));
        self.bytes += bytes;
        self
    }

    /// Add the k-NN probe's search of a fold's `test` rows against its `train` real rows
    /// ([`search_peak_bytes`]); the search of the synthetic rows is smaller and runs after it.
    pub fn with_neighbour_search(
        mut self,
        test: usize,
        train: usize,
        dims: usize,
        k: usize,
        threads: usize,
    ) -> Estimate {
        let bytes = search_peak_bytes(test, train, dims, k, threads);
        self.parts.push(("neighbour search".into(), bytes));
        self.bytes += bytes;
        self
    }

    /// Add `workers` PCA fits on `rows × dims` at once ([`Pca::fit_peak_bytes`]): the
    /// principal-noise fits of the grown classes run in parallel, the report's scatter
    /// projections one at a time.
    pub fn with_pca(mut self, rows: usize, dims: usize, workers: usize) -> Estimate {
        let bytes = (workers as u64).saturating_mul(Pca::fit_peak_bytes(rows, dims));
        self.parts.push(("PCA".into(), bytes));
        self.bytes += bytes;
        self
    }

    /// Add calibrated's statistics of the lending classes (`lender_rows`: each lender's
    /// training rows; [`crate::augment::lender_bytes`]): a factor of each covariance in
    /// place of the d × d matrix, and `workers` PCA fits at once.
    pub fn with_lenders(mut self, lender_rows: &[usize], dims: usize, workers: usize) -> Estimate {
        let bytes = crate::augment::lender_bytes(lender_rows, dims, workers);
        self.parts.push(("borrowed covariances".into(), bytes));
        self.bytes += bytes;
        self
    }

    /// Add mix's copy of the `rows` training rows its partners are drawn from
    /// ([`crate::augment::partner_bytes`]).
    pub fn with_partner_rows(mut self, rows: usize, dims: usize) -> Estimate {
        let bytes = crate::augment::partner_bytes(rows, dims);
        self.parts.push(("mix partner rows".into(), bytes));
        self.bytes += bytes;
        self
    }

    /// "120 MiB (matrix 80 MiB, synthetic rows 40 MiB)".
    pub fn describe(&self) -> String {
        let parts: Vec<String> = self
            .parts
            .iter()
            .filter(|(_, b)| *b > 0)
            .map(|(n, b)| format!("{n} {}", human(*b)))
            .collect();
        format!("{} ({})", human(self.bytes), parts.join(", "))
    }
}

/// Bytes as GiB/MiB (KiB or bytes below a MiB) for messages.
pub fn human(b: u64) -> String {
    let mib = b as f64 / (1u64 << 20) as f64;
    if mib >= 1024.0 {
        format!("{:.1} GiB", mib / 1024.0)
    } else if mib >= 1.0 {
        format!("{mib:.0} MiB")
    } else if b >= 1024 {
        // Below a MiB, "0 MiB" would read as nothing at all.
        format!("{:.0} KiB", b as f64 / 1024.0)
    } else {
        format!("{b} B")
    }
}

fn matrix(rows: usize, dims: usize) -> u64 {
    (rows as u64).saturating_mul(dims as u64).saturating_mul(4)
}

/// The input's own f64 values, kept beside the f32 matrix so real rows are written back
/// bit-identical; nothing for the other float types (f16 and bf16 are exact in f32).
fn kept_f64(rows: usize, dims: usize, stored: FloatType) -> u64 {
    if stored == FloatType::F64 {
        2 * matrix(rows, dims)
    } else {
        0
    }
}

/// Peak while reading `path` (embeddings stored as `stored`) into a `rows × dims` matrix: the
/// file image or parsed text, the decoded matrix, and for f64 input its kept f64 values.
pub fn for_read(path: &Path, rows: usize, dims: usize, stored: FloatType) -> Estimate {
    Estimate::of(vec![
        ("runtime".into(), RUNTIME),
        (
            "file image".into(),
            read_staging_bytes(path, rows, dims, stored),
        ),
        ("matrix".into(), matrix(rows, dims)),
        ("f64 values".into(), kept_f64(rows, dims, stored)),
    ])
}

/// Peak of `grow`: reading, then the matrix, the synthetic rows, the output set (the
/// synthetic rows appended to the input's matrix in place, plus the per-row columns) and the
/// export image (safetensors builds the matrix member in memory, Parquet and Arrow one record
/// batch; npz writes the matrix a row at a time, CSV and HDF5 stream). The export image is in
/// the input's float type; f64 input also keeps its f64 values, extended in place too.
pub fn for_grow(
    input: &Path,
    rows: usize,
    dims: usize,
    synthetic: usize,
    output: &Path,
    stored: FloatType,
) -> Estimate {
    let out_rows = rows + synthetic;
    let format = Format::of(output).ok();
    // Bytes per value as written: npz and HDF5 write bfloat16 as f32; CSV is text from f32.
    let written = match (format, stored) {
        (Some(Format::Npz | Format::Hdf5 | Format::Parquet | Format::Arrow), FloatType::BF16) => 4,
        _ => stored.bytes() as u64,
    };
    let values = (out_rows as u64)
        .saturating_mul(dims as u64)
        .saturating_mul(written);
    let image = match format {
        Some(Format::Safetensors) => values,
        // The record batch, plus a row group's encoded pages held until it is flushed.
        Some(Format::Parquet) => 2 * values,
        Some(Format::Arrow) => values,
        // The half-precision copy HDF5 writes from.
        Some(Format::Hdf5) if stored == FloatType::F16 => values,
        _ => 0,
    };
    let grow = Estimate::of(vec![
        ("runtime".into(), RUNTIME),
        ("matrix".into(), matrix(rows, dims)),
        ("f64 values".into(), kept_f64(rows, dims, stored)),
        ("synthetic rows".into(), matrix(synthetic, dims)),
        (
            "output set".into(),
            matrix(synthetic, dims)
                + kept_f64(synthetic, dims, stored)
                + out_rows as u64 * ROW_EXTRA,
        ),
        ("export image".into(), image),
    ]);
    for_read(input, rows, dims, stored).max(grow)
}

/// Peak of `assess`: the matrix, the synthetic rows of the biggest method in a fold, and the
/// linear probe's standardised copy of the real and synthetic training rows (it reads the
/// two parts in place, so there is no stacked copy). A fold's rows are read in place in the
/// matrix (`data::Rows`), never copied out.
/// The f64 values of an f64 input count while reading only: assess computes in f32 and lets
/// them go.
pub fn for_assess(
    input: &Path,
    rows: usize,
    dims: usize,
    synthetic: usize,
    folds: usize,
    linear: bool,
    stored: FloatType,
) -> Estimate {
    let folds = folds.max(2);
    let train = rows - rows / folds;
    let syn = synthetic - synthetic / folds;
    let probe = if linear {
        LinearProbe::fit_peak_bytes(train + syn, dims)
    } else {
        0
    };
    let assess = Estimate::of(vec![
        ("runtime".into(), RUNTIME),
        ("matrix".into(), matrix(rows, dims)),
        ("synthetic rows".into(), matrix(syn, dims)),
        ("linear probe".into(), probe),
    ]);
    for_read(input, rows, dims, stored).max(assess)
}

/// MemAvailable from /proc/meminfo, where there is one.
pub fn available() -> Option<u64> {
    let text = std::fs::read_to_string("/proc/meminfo").ok()?;
    let line = text.lines().find(|l| l.starts_with("MemAvailable:"))?;
    let kib: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib * 1024)
}

/// Parses a memory limit: bytes, or a number with K, M, G or T (powers of 1024).
pub fn parse_size(s: &str) -> Result<u64> {
    let t = s.trim();
    let (num, mult) = match t.char_indices().find(|(_, c)| c.is_ascii_alphabetic()) {
        Some((i, _)) => {
            let unit = t[i..].to_ascii_uppercase();
            let m = match unit.trim_end_matches("IB").trim_end_matches('B') {
                "" => 1u64,
                "K" => 1 << 10,
                "M" => 1 << 20,
                "G" => 1 << 30,
                "T" => 1 << 40,
                _ => 0,
            };
            (&t[..i], m)
        }
        None => (t, 1),
    };
    let v: f64 = num.trim().parse().unwrap_or(f64::NAN);
    if mult == 0 || !v.is_finite() || v <= 0.0 {
        return Err(Error::param(
            "max-memory",
            format!("'{s}' is not a size"),
            "give a size such as 512M, 8G or 2.5G",
        ));
    }
    Ok((v * mult as f64) as u64)
}

/// Refuses, with [`Error::Resource`], when the estimate exceeds `max_memory` or the memory the
/// system has available. `what` names the job; `suggest` says what to change for it.
pub fn check(est: &Estimate, max_memory: Option<u64>, what: &str, suggest: &str) -> Result<()> {
    let avail = available();
    let (bytes, source) = match (max_memory, avail) {
        (Some(m), Some(a)) if a < m => (a, LimitSource::Available),
        (Some(m), _) => (m, LimitSource::Given),
        (None, Some(a)) => (a, LimitSource::Available),
        (None, None) => return Ok(()),
    };
    if est.bytes > bytes {
        return Err(Error::Resource {
            what: what.to_string(),
            resource: "memory",
            needed: est.describe(),
            needed_bytes: est.bytes,
            limit: Limit { bytes, source },
            fix: suggest.to_string(),
        });
    }
    Ok(())
}

/// Peak resident memory of this process so far (VmHWM), where the system reports it.
pub fn peak_resident() -> Option<u64> {
    let text = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = text.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kib: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib * 1024)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_sizes_are_not_shown_as_zero_mib() {
        // common practice, no source: binary units, rounded to whole units.
        assert_eq!(human(3 << 30), "3.0 GiB");
        assert_eq!(human(5 << 20), "5 MiB");
        assert_eq!(human(300 * 1024), "300 KiB");
        assert_eq!(human(700), "700 B");
    }

    #[test]
    fn sizes_and_refusal() {
        // common practice, no source: K/M/G are powers of 1024 as in `ulimit`/`free -h`.
        assert_eq!(parse_size("512M").unwrap(), 512 << 20);
        assert_eq!(
            parse_size("2.5G").unwrap(),
            (2.5 * (1u64 << 30) as f64) as u64
        );
        assert_eq!(parse_size("1024").unwrap(), 1024);
        assert_eq!(parse_size("8GiB").unwrap(), 8 << 30);
        assert!(parse_size("lots").is_err());
        assert!(parse_size("-1G").is_err());
        let est = for_grow(
            Path::new("a.npz"),
            1000,
            100,
            1000,
            Path::new("b.npz"),
            FloatType::F32,
        );
        // 4 bytes per value: matrix 1000×100 → 400 000 bytes appears among the parts.
        assert!(est.parts.contains(&("matrix".to_string(), 400_000)));
        // f64 input keeps its 8-byte values beside the f32 matrix: 1000×100×8 = 800 000.
        let wide = for_grow(
            Path::new("a.npz"),
            1000,
            100,
            1000,
            Path::new("b.npz"),
            FloatType::F64,
        );
        assert!(wide.parts.contains(&("f64 values".to_string(), 800_000)));
        assert!(wide.bytes > est.bytes);
        let err = check(&est, Some(1 << 20), "grow", "grow fewer classes").unwrap_err();
        let msg = err.to_string();
        assert!(msg.contains("grow fewer classes"), "{msg}");
        match err {
            Error::Resource {
                needed_bytes,
                limit,
                ..
            } => {
                assert_eq!(needed_bytes, est.bytes);
                assert!(limit.bytes < est.bytes);
                assert!(limit.source == LimitSource::Given || available().is_some());
            }
            other => panic!("not a resource error: {other}"),
        }
        assert!(check(&est, Some(1 << 40), "grow", "x").is_ok() || available().is_some());
    }
}
