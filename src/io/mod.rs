//! Reading and writing embedding sets. One module per format; the format is chosen by the
//! file's extension and the keys by options. Every reader yields the same [`Dataset`]; every
//! writer goes through `atomic.rs` so a crash never leaves half a file under the target name.

//!
//! | extension | read | write |
//! |---|---|---|
//! | `.npy` | embeddings; labels from `labels_file` | refused (one array cannot hold labels and provenance) |
//! | `.npz` | members by key; `id`, `group` (or the older `ids`, `groups`), fold carried | uncompressed archive, embeddings in the input's float type |
//! | `.csv` / `.tsv` | header row; label, `id`, `group`, fold, ignored columns; the rest are features | a table input's columns and real rows' text, then provenance; else role columns, `f0`.., provenance |
//! | `.safetensors` | tensors by key | text columns as I64 codes, names in `__metadata__` |
//! | `.h5` / `.hdf5` | datasets by path (feature `hdf5`) | variable-length UTF-8 strings |
//! | `.parquet`, `.arrow` / `.feather` | a list column or numeric columns; role columns by name as in CSV; other columns carried (feature `columnar`) | embeddings as one fixed-size list column, the input's other columns carried through |
//!
//! Every output carries `source_row`, each row's index in the input file.

mod assemble;
mod atomic;
mod carried;
#[cfg(feature = "columnar")]
mod columnar;
mod csv;
mod export;
#[cfg(feature = "hdf5")]
mod hdf5;
mod npy;
mod npz;
pub mod output_target;
mod pyliteral;
mod read_memory;
mod rename;
mod safetensors;
pub mod temporaries;
mod tensor;

use std::path::{Path, PathBuf};

use crate::data::Dataset;
use crate::error::{Error, Result};

pub use atomic::check_target;
pub use atomic::write_dir_with as write_dir_atomically;
pub use atomic::write_with as write_atomically;
pub use carried::Carried;
pub use csv::TableSource;
pub use read_memory::read_staging_bytes;

/// The fold key (member, tensor, dataset or column) read when the caller names none.
pub const DEFAULT_FOLD_KEY: &str = "fold";
/// The plural spelling of the fold key, accepted in its place with a note (as `ids` and
/// `groups` are for `id` and `group`).
pub const OLD_FOLD_KEY: &str = "folds";

/// Where to find each piece of a dataset inside a file.
#[derive(Debug, Clone)]
pub struct ReadOptions {
    /// A separate labels file (for `.npy` embeddings).
    pub labels_file: Option<PathBuf>,
    /// npz member / safetensors tensor / HDF5 dataset path holding the embeddings.
    pub embeddings_key: String,
    /// npz member / safetensors tensor / HDF5 dataset path holding the labels.
    pub labels_key: String,
    /// CSV/TSV label column.
    pub label_column: String,
    /// Name of the fold-assignment member or column (default `fold`).
    pub fold_key: String,
    /// CSV/TSV column holding the row ids; `None` reads `id` (or the older `ids`) if present.
    pub id_column: Option<String>,
    /// CSV/TSV column holding the groups; `None` reads `group` (or `groups`) if present.
    pub group_column: Option<String>,
    /// CSV/TSV column holding the folds; `None` reads the `fold_key` column if present.
    pub fold_column: Option<String>,
    /// CSV/TSV columns that carry nothing embloom uses (free text, say): read past on input
    /// and kept on output.
    pub ignore_columns: Vec<String>,
    /// Refuse a text table whose estimated reading peak exceeds this many bytes (it is always
    /// refused above the memory the system has available).
    pub max_memory: Option<u64>,
    /// Skip rows with NaN/Inf instead of refusing the file.
    pub drop_nonfinite: bool,
    /// Keep rows with NaN/Inf as they are (for `inspect`, which reports them).
    pub keep_nonfinite: bool,
    /// Member or column naming each row's parent in another file (an external set of
    /// input-space augmented rows: the real row each came from, as an id or row index), read
    /// as text into [`Loaded::parent_refs`]. `None` reads no such role.
    pub parent_key: Option<String>,
}

impl Default for ReadOptions {
    fn default() -> Self {
        ReadOptions {
            labels_file: None,
            embeddings_key: "embeddings".into(),
            labels_key: "labels".into(),
            label_column: "label".into(),
            fold_key: DEFAULT_FOLD_KEY.into(),
            id_column: None,
            group_column: None,
            fold_column: None,
            ignore_columns: Vec::new(),
            max_memory: None,
            drop_nonfinite: false,
            keep_nonfinite: false,
            parent_key: None,
        }
    }
}

/// A dataset and what reading it involved.
#[derive(Debug, Clone)]
pub struct Loaded {
    /// The rows, labels and optional ids/groups/folds as read.
    pub dataset: Dataset,
    /// Rows skipped because of NaN/Inf (only with `drop_nonfinite`).
    pub dropped_nonfinite: usize,
    /// Per-row `origin` when the file is one embloom grew (`real` or the method's name).
    pub origin: Option<Vec<String>>,
    /// Per-row `parent` of a grown file, as stored: a real row's own index among the file's
    /// real rows, a synthetic row's base real row in that index space (rows NaN/Inf dropping
    /// removed keep their stored values, so the indices still name the rows as written).
    pub parent: Option<Vec<i64>>,
    /// Per-row `partner`, in the same index space as `parent`; −1 where no neighbour was used.
    pub partner: Option<Vec<i64>>,
    /// Each row's parent as text, read from [`ReadOptions::parent_key`] when one is given.
    pub parent_refs: Option<Vec<String>>,
    /// How the file was read where a user may want to know (an old key name accepted, say);
    /// the binary prints them, the library never does.
    pub notes: Vec<String>,
    /// A columnar input's columns that have no role and are not features, in file row order,
    /// for [`write_carrying`] to put back beside the rows they belong to.
    pub carried: Option<Carried>,
}

/// An augmented set ready to export: real rows first, then synthetic rows, with provenance
/// per row (`origin` is the method name, or `real`; `parent` is a real row index; `partner`
/// is −1 where no neighbour was used; `weight` is u, λ or the noise magnitude).
#[derive(Debug, Clone)]
pub struct AugmentedSet {
    /// Real rows first, then synthetic rows, in the input's float type.
    pub data: Dataset,
    /// Per row: the method name that drew it, or `real`.
    pub origin: Vec<String>,
    /// Per row: the index of the real row it was drawn from (a real row's own index).
    pub parent: Vec<i64>,
    /// Per row: the index of the real neighbour used, or −1 (real rows and noise methods).
    pub partner: Vec<i64>,
    /// Per row: u (interpolate), λ (extrapolate), the noise magnitude, λ of mix (the share
    /// of the row's own label), or 0 for real rows.
    pub weight: Vec<f32>,
    /// Per row, when some row has a soft label (mix): the partner's class name for such a row,
    /// empty text for the others; `None` (and no `partner_label` column) otherwise.
    pub partner_label: Option<Vec<String>>,
}

/// The file formats embloom knows, by extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    /// NumPy `.npy`: the matrix alone; the labels come from a second `.npy` file.
    Npy,
    /// NumPy `.npz`: the matrix and labels (plus roles) as named arrays.
    Npz,
    /// Comma-separated text with a header row.
    Csv,
    /// Tab-separated text with a header row.
    Tsv,
    /// safetensors: named tensors, with roles in its metadata or tensors.
    Safetensors,
    /// HDF5, named datasets (readable only with the `hdf5` feature).
    Hdf5,
    /// Apache Parquet (readable only with the `columnar` feature).
    Parquet,
    /// Arrow IPC file, also called Feather v2 (readable only with the `columnar` feature).
    Arrow,
}

/// Extensions accepted, for messages.
pub const SUPPORTED: &str =
    ".npy, .npz, .csv, .tsv, .safetensors, .h5, .hdf5, .parquet, .arrow, .feather";

impl Format {
    /// The format of `path`, from its (case-insensitive) extension.
    pub fn of(path: &Path) -> Result<Format> {
        let ext = path
            .extension()
            .map(|e| e.to_string_lossy().to_ascii_lowercase())
            .unwrap_or_default();
        Ok(match ext.as_str() {
            "npy" => Format::Npy,
            "npz" => Format::Npz,
            "csv" => Format::Csv,
            "tsv" => Format::Tsv,
            "safetensors" => Format::Safetensors,
            "h5" | "hdf5" => Format::Hdf5,
            "parquet" => Format::Parquet,
            "arrow" | "feather" => Format::Arrow,
            _ => {
                let found = if ext.is_empty() {
                    "no extension".to_string()
                } else {
                    format!("extension '.{ext}'")
                };
                return Err(Error::input(
                    path,
                    format!("{found} is not a supported format"),
                    format!("use one of {SUPPORTED}"),
                ));
            }
        })
    }
}

#[cfg(not(feature = "hdf5"))]
fn no_hdf5(path: &Path) -> Error {
    Error::input(
        path,
        "this build of embloom has no HDF5 support (the optional `hdf5` feature, which needs libhdf5)",
        "convert the file to .npz, or use a build with HDF5 support (README: Formats and keys)",
    )
}

#[cfg(not(feature = "columnar"))]
fn no_columnar(path: &Path) -> Error {
    Error::input(
        path,
        "this build of embloom has no Parquet or Arrow support",
        "rebuild with `cargo build --release --features columnar`, or convert the file to .npz (pandas: numpy.savez)",
    )
}

fn require_file(path: &Path, what: &str) -> Result<()> {
    match std::fs::metadata(path) {
        Ok(m) if m.is_file() => Ok(()),
        Ok(_) => Err(Error::input(
            path,
            format!("{what} is not a regular file"),
            "give the path of a file",
        )),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Err(Error::input(
            path,
            format!("{what} not found"),
            "check the path",
        )),
        Err(e) => Err(Error::io(path, e)),
    }
}

/// The matrix of a `.npy` file with no labels, for a description of the rows alone (as
/// `inspect` gives); every other command needs labels. Returns the matrix and its dtype.
pub fn read_unlabelled_npy(path: &Path) -> Result<(ndarray::Array2<f32>, String)> {
    require_file(path, "input file")?;
    let m = npy::read_file(path, "array")?.into_matrix(path, "array")?;
    Ok((m.x, m.dtype))
}

/// A `.npy` embeddings file plus its separate labels file.
fn read_npy(path: &Path, opts: &ReadOptions) -> Result<(assemble::Parts, assemble::Stored)> {
    let m = npy::read_file(path, "array")?.into_matrix(path, "array")?;
    let Some(lp) = opts.labels_file.as_deref() else {
        return Err(Error::input(
            path,
            "a .npy file holds only the embeddings; the labels must come from a second file",
            "pass `labels_file` (a .npy array with one label per row), or use .npz/.csv/.safetensors/.h5",
        ));
    };
    require_file(lp, "labels file")?;
    if Format::of(lp)? != Format::Npy {
        return Err(Error::input(
            lp,
            "the labels file must be a .npy array",
            "save the labels with numpy.save(FILE.npy, labels)",
        ));
    }
    let labels = npy::read_file(lp, "array")?.into_labels(lp, "array")?;
    let stored = assemble::Stored {
        x_f64: m.x_f64,
        float_type: m.float_type,
        ..Default::default()
    };
    let parts = assemble::Parts {
        x: m.x,
        stored_dtype: m.dtype,
        x_source: format!("embeddings {}", path.display()),
        labels,
        labels_source: format!("labels file {}", lp.display()),
        ids: None,
        groups: None,
        folds: None,
        row_lines: None,
        origin: None,
        parent: None,
        partner: None,
        parent_refs: None,
    };
    Ok((parts, stored))
}

/// Read any supported format, chosen by extension.
pub fn read(path: &Path, opts: &ReadOptions) -> Result<Loaded> {
    let format = Format::of(path)?;
    require_file(path, "input file")?;
    if let Some(key) = opts.parent_key.as_deref()
        && format == Format::Npy
    {
        return Err(Error::input(
            path,
            format!(
                "a .npy file holds only embeddings, so it has no '{key}' naming each row's parent"
            ),
            "store the embeddings, labels and parent together in an .npz, .csv, .safetensors or .h5 file",
        ));
    }
    let (parts, stored) = match format {
        Format::Npy => read_npy(path, opts)?,
        Format::Npz => npz::read(path, opts)?,
        Format::Csv => csv::read(path, b',', opts)?,
        Format::Tsv => csv::read(path, b'\t', opts)?,
        Format::Safetensors => safetensors::read(path, opts)?,
        #[cfg(feature = "hdf5")]
        Format::Hdf5 => hdf5::read(path, opts)?,
        #[cfg(not(feature = "hdf5"))]
        Format::Hdf5 => return Err(no_hdf5(path)),
        #[cfg(feature = "columnar")]
        Format::Parquet => columnar::read_parquet(path, opts)?,
        #[cfg(feature = "columnar")]
        Format::Arrow => columnar::read_ipc(path, opts)?,
        #[cfg(not(feature = "columnar"))]
        Format::Parquet | Format::Arrow => return Err(no_columnar(path)),
    };
    assemble::finish(
        path,
        parts,
        stored,
        opts.drop_nonfinite,
        opts.keep_nonfinite,
    )
}

/// Runs a stream writer on a buffered file at `tmp`.
fn stream(
    tmp: &Path,
    f: impl FnOnce(&mut dyn std::io::Write) -> std::io::Result<()>,
) -> Result<()> {
    let file = std::fs::OpenOptions::new()
        .write(true)
        .truncate(true)
        .open(tmp)
        .map_err(|e| Error::io(tmp, e))?;
    let mut w = std::io::BufWriter::new(file);
    f(&mut w).map_err(|e| Error::io(tmp, e))
}

/// The format `path` would be written in, or why it cannot be: checked before any work so a
/// long job never ends on a refused output name.
pub fn output_format(path: &Path) -> Result<Format> {
    let format = Format::of(path).map_err(|_| {
        Error::output(
            path,
            "unknown output extension",
            "name the output with one of .npz, .csv, .tsv, .safetensors, .h5, .parquet, .arrow",
        )
    })?;
    if format == Format::Npy {
        return Err(Error::output(
            path,
            "a .npy file holds one array and cannot keep the labels and provenance",
            "use .npz, .csv, .safetensors or .h5 to keep labels and provenance",
        ));
    }
    #[cfg(not(feature = "hdf5"))]
    if format == Format::Hdf5 {
        return Err(Error::output(
            path,
            "this build of embloom has no HDF5 support (the optional `hdf5` feature, which needs libhdf5)",
            "write .npz, or use a build with HDF5 support (README: Formats and keys)",
        ));
    }
    #[cfg(not(feature = "columnar"))]
    if matches!(format, Format::Parquet | Format::Arrow) {
        return Err(Error::output(
            path,
            "this build of embloom has no Parquet or Arrow support",
            "rebuild with `--features columnar`, or write .npz",
        ));
    }
    Ok(format)
}

/// Write an augmented set in the format of `path`'s extension. Refuses an existing file
/// unless `force`. The file appears complete or not at all (see `atomic.rs`).
pub fn write(path: &Path, set: &AugmentedSet, force: bool) -> Result<()> {
    write_carrying(path, set, force, None)
}

/// [`write`], with the input's carried columns (see [`Loaded::carried`]): a Parquet or Arrow
/// output puts each real row's values back beside it (by its `source_row`) and nulls on the
/// synthetic rows; the other formats have no place for arbitrary typed columns and leave
/// them out.
#[cfg_attr(not(feature = "columnar"), allow(unused_variables))]
pub fn write_carrying(
    path: &Path,
    set: &AugmentedSet,
    force: bool,
    carried: Option<&Carried>,
) -> Result<()> {
    let format = output_format(path)?;
    let export = export::prepare(path, set, matches!(format, Format::Csv | Format::Tsv))?;
    write_export(path, format, &export, force, carried)
}

/// Write rows with their labels and each row's parent as the real file names it (an id, or a
/// row index as text): the layout `assess --external` reads, all or nothing. The rows are
/// not a grown set (their parents are rows of another file), so no provenance is written.
pub fn write_with_parents(
    path: &Path,
    x: &ndarray::Array2<f32>,
    labels: &[String],
    parents: &[String],
    force: bool,
) -> Result<()> {
    let format = output_format(path)?;
    if labels.len() != x.nrows() || parents.len() != x.nrows() {
        return Err(Error::output(
            path,
            format!(
                "{} rows, {} labels and {} parents",
                x.nrows(),
                labels.len(),
                parents.len()
            ),
            "this is a bug in the caller; please report it",
        ));
    }
    let export = export::Export {
        stored: export::Matrix::F32(x),
        columns: vec![
            ("labels".to_string(), export::Column::Text(labels.to_vec())),
            ("parent".to_string(), export::Column::Text(parents.to_vec())),
        ],
        table: None,
        n_real: x.nrows(),
    };
    write_export(path, format, &export, force, None)
}

#[cfg_attr(not(feature = "columnar"), allow(unused_variables))]
fn write_export(
    path: &Path,
    format: Format,
    export: &export::Export<'_>,
    force: bool,
    carried: Option<&Carried>,
) -> Result<()> {
    atomic::write_with(path, force, |tmp| match format {
        Format::Npz => {
            let file = std::fs::OpenOptions::new()
                .write(true)
                .truncate(true)
                .open(tmp)
                .map_err(|e| Error::io(tmp, e))?;
            npz::write(file, export).map_err(|e| Error::io(tmp, e))
        }
        Format::Csv => csv::write(tmp, b',', export),
        Format::Tsv => csv::write(tmp, b'\t', export),
        Format::Safetensors => stream(tmp, |w| safetensors::write(w, export)),
        #[cfg(feature = "hdf5")]
        Format::Hdf5 => hdf5::write(tmp, export),
        #[cfg(feature = "columnar")]
        Format::Parquet => columnar::write_parquet(tmp, export, carried),
        #[cfg(feature = "columnar")]
        Format::Arrow => columnar::write_ipc(tmp, export, carried),
        _ => Err(Error::output(
            path,
            "unsupported output format",
            "use .npz, .csv, .safetensors, .h5, .parquet or .arrow",
        )),
    })
}

impl AugmentedSet {
    /// A set of real rows only (provenance says `real`, each row its own parent).
    pub fn all_real(data: Dataset) -> AugmentedSet {
        let n = data.n_rows();
        AugmentedSet {
            data,
            origin: vec!["real".to_string(); n],
            parent: (0..n as i64).collect(),
            partner: vec![-1; n],
            weight: vec![0.0; n],
            partner_label: None,
        }
    }
}
