//! What an assessment says about its input: the path, a SHA-256 of the file, its shape and
//! classes, so a report names exactly the data it was computed on.

use std::io::Read;
use std::path::Path;

use sha2::{Digest, Sha256};

use super::InputInfo;
use super::results::HashedFile;
use crate::data::Dataset;
use crate::error::{Error, Result};

impl InputInfo {
    /// Describe `ds`, read from `path`, for the results.
    pub fn of(path: &Path, ds: &Dataset) -> Result<InputInfo> {
        Ok(InputInfo {
            sha256: sha256_of(path)?,
            ..InputInfo::in_memory(path.display().to_string(), ds)
        })
    }

    /// Describe `ds` held in memory (arrays from a caller, simulated data) under `name`: there
    /// is no file to hash, so the SHA-256 is left empty.
    pub fn in_memory(name: impl Into<String>, ds: &Dataset) -> InputInfo {
        InputInfo {
            path: name.into(),
            sha256: String::new(),
            rows: ds.n_rows(),
            dims: ds.dims(),
            classes: ds.classes.clone(),
            class_counts: ds.class_counts(),
            labels_file: None,
        }
    }

    /// Name the separate labels file the labels were read from, hashing it, so the results
    /// identify every byte they depend on.
    pub fn with_labels_file(mut self, labels: Option<&Path>) -> Result<InputInfo> {
        self.labels_file = match labels {
            Some(p) => Some(HashedFile {
                path: p.display().to_string(),
                sha256: sha256_of(p)?,
            }),
            None => None,
        };
        Ok(self)
    }
}

/// Hex SHA-256 of a file, so a report names exactly the data it was computed on.
pub fn sha256_of(path: &Path) -> Result<String> {
    let mut file = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
    let mut hasher = Sha256::new();
    let mut buf = vec![0u8; 1 << 20];
    loop {
        let n = file.read(&mut buf).map_err(|e| Error::io(path, e))?;
        if n == 0 {
            break;
        }
        hasher.update(&buf[..n]);
    }
    Ok(hasher
        .finalize()
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect())
}
