//! Reading and writing embedding sets. One module per format; the format is chosen by the
//! file's extension and the keys by options. Every reader yields the same [`Dataset`]; every
//! writer goes through [`atomic`] so a crash never leaves half a file under the target name.

use std::path::{Path, PathBuf};

use crate::data::Dataset;
use crate::error::Result;

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
    /// Skip rows with NaN/Inf instead of refusing the file.
    pub drop_nonfinite: bool,
}

impl Default for ReadOptions {
    fn default() -> Self {
        ReadOptions {
            labels_file: None,
            embeddings_key: "embeddings".into(),
            labels_key: "labels".into(),
            label_column: "label".into(),
            fold_key: "fold".into(),
            drop_nonfinite: false,
        }
    }
}

/// A dataset and what reading it involved.
#[derive(Debug, Clone)]
pub struct Loaded {
    pub dataset: Dataset,
    /// Rows skipped because of NaN/Inf (only with `drop_nonfinite`).
    pub dropped_nonfinite: usize,
}

/// An augmented set ready to export: real rows first, then synthetic rows, with provenance
/// per row (`origin` is the method name, or `real`; `parent` is a real row index; `partner`
/// is −1 where no neighbour was used; `weight` is u, λ or the noise magnitude).
#[derive(Debug, Clone)]
pub struct AugmentedSet {
    pub data: Dataset,
    pub origin: Vec<String>,
    pub parent: Vec<i64>,
    pub partner: Vec<i64>,
    pub weight: Vec<f32>,
}

/// Read any supported format, chosen by extension.
pub fn read(path: &Path, opts: &ReadOptions) -> Result<Loaded> {
    let _ = (path, opts);
    todo!("io helper")
}

/// Write an augmented set in the format of `path`'s extension. Refuses an existing file
/// unless `force`.
pub fn write(path: &Path, set: &AugmentedSet, force: bool) -> Result<()> {
    let _ = (path, set, force);
    todo!("io helper")
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
        }
    }
}
