//! One error type for the library. Every variant says what went wrong, where (the file, key,
//! row, parameter or job) *and* what the user can do about it. The library names parameters
//! by their own names (`Param { name: "neighbours", .. }`) and never by a command-line flag: the
//! binary adds the flag spelling when it prints.

use std::path::{Path, PathBuf};

use crate::memory::human;

/// Library result alias.
pub type Result<T, E = Error> = std::result::Result<T, E>;

/// Every way a library call can fail. Each message carries a `fix`: what to change to
/// make the call succeed.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// An input file is unreadable or malformed. `location` names the key, column or row.
    #[error("{}: {detail}{}\n  fix: {fix}", path.display(), location.as_deref().map(|l| format!(" ({l})")).unwrap_or_default())]
    Input {
        /// The file at fault.
        path: PathBuf,
        /// The key, column or row at fault, when one is.
        location: Option<String>,
        /// What is wrong with it.
        detail: String,
        /// What the user can change.
        fix: String,
    },
    /// The operating system refused a read or write.
    #[error("{}: {source}", path.display())]
    Io {
        /// The file being read or written.
        path: PathBuf,
        /// What the operating system said.
        #[source]
        source: std::io::Error,
    },
    /// A parameter is out of range or inconsistent with the data. `name` is the parameter's
    /// library name (`k`, `target`, `variance-kept`), never a flag.
    #[error("invalid {name}: {detail}\n  fix: {fix}")]
    Param {
        /// The parameter's library name (e.g. `neighbours`, `folds`).
        name: String,
        /// What is wrong with the value.
        detail: String,
        /// A valid value or range to use instead.
        fix: String,
    },
    /// The data cannot support the requested operation (too few rows, a single class, ...).
    /// `at` names where, when one place is to blame (a method, a class).
    #[error("{}{detail}\n  fix: {fix}", at.as_deref().map(|a| format!("{a}: ")).unwrap_or_default())]
    Data {
        /// The method, class or stage at fault, when one is.
        at: Option<String>,
        /// What the data lacks.
        detail: String,
        /// What the user can change (more rows, fewer folds, another method).
        fix: String,
    },
    /// A job would need more of a resource than it may use: refused before any work starts.
    #[error("{what} would need about {needed} of {resource}, more than {limit}\n  fix: {fix}")]
    Resource {
        /// The job, e.g. "growing a.npz to 500 more rows".
        what: String,
        /// What runs short, e.g. "memory".
        resource: &'static str,
        /// The estimate as the user reads it, with its breakdown.
        needed: String,
        /// The estimate in bytes.
        needed_bytes: u64,
        /// The limit the estimate went over, and where it came from.
        limit: Limit,
        /// What to lower (or raise) for the job to fit.
        fix: String,
    },
    /// An output cannot be written as asked.
    #[error("{}: {detail}\n  fix: {fix}", path.display())]
    Output {
        /// The output path at fault.
        path: PathBuf,
        /// Why it cannot be written.
        detail: String,
        /// What the user can change (another path, another format).
        fix: String,
    },
}

/// The bound a [`Error::Resource`] estimate was held against.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Limit {
    /// The limit, in bytes.
    pub bytes: u64,
    /// Whether the caller gave it or it is what the machine has.
    pub source: LimitSource,
}

/// Where a limit came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LimitSource {
    /// The limit the caller gave (the `max_memory` setting).
    Given,
    /// What the machine has available.
    Available,
}

impl std::fmt::Display for Limit {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self.source {
            LimitSource::Given => write!(f, "the given limit ({})", human(self.bytes)),
            LimitSource::Available => write!(
                f,
                "the memory available on this machine ({})",
                human(self.bytes)
            ),
        }
    }
}

impl Error {
    /// A malformed input file, with no particular location.
    pub fn input(path: &Path, detail: impl Into<String>, fix: impl Into<String>) -> Self {
        Error::Input {
            path: path.to_path_buf(),
            location: None,
            detail: capped(detail.into()),
            fix: fix.into(),
        }
    }

    /// A malformed input file, at a key, column or row named by `location`.
    pub fn input_at(
        path: &Path,
        location: impl Into<String>,
        detail: impl Into<String>,
        fix: impl Into<String>,
    ) -> Self {
        Error::Input {
            path: path.to_path_buf(),
            location: Some(capped(location.into())),
            detail: capped(detail.into()),
            fix: fix.into(),
        }
    }

    /// The operating system refused to read or write `path`.
    pub fn io(path: &Path, source: std::io::Error) -> Self {
        Error::Io {
            path: path.to_path_buf(),
            source,
        }
    }

    /// A parameter out of range, by its library name (never a flag spelling).
    pub fn param(
        name: impl Into<String>,
        detail: impl Into<String>,
        fix: impl Into<String>,
    ) -> Self {
        Error::Param {
            name: name.into(),
            detail: detail.into(),
            fix: fix.into(),
        }
    }

    /// Data that cannot support the operation, with no one method or class to blame.
    pub fn data(detail: impl Into<String>, fix: impl Into<String>) -> Self {
        Error::Data {
            at: None,
            detail: detail.into(),
            fix: fix.into(),
        }
    }

    /// Data that cannot support the operation, at the method or class named by `at`.
    pub fn data_at(
        at: impl Into<String>,
        detail: impl Into<String>,
        fix: impl Into<String>,
    ) -> Self {
        Error::Data {
            at: Some(at.into()),
            detail: detail.into(),
            fix: fix.into(),
        }
    }

    /// An output that cannot be written as asked.
    pub fn output(path: &Path, detail: impl Into<String>, fix: impl Into<String>) -> Self {
        Error::Output {
            path: path.to_path_buf(),
            detail: detail.into(),
            fix: fix.into(),
        }
    }
}

/// Echoed input (a header, a cell, a column name) cut to a few lines: a 50 MB header must
/// not come back in full in an error message.
fn capped(s: String) -> String {
    const MAX: usize = 400;
    match s.char_indices().nth(MAX) {
        Some((at, _)) => format!("{}… ({} more bytes)", &s[..at], s.len() - at),
        None => s,
    }
}

#[cfg(test)]
mod capped_tests {
    #[test]
    fn long_echoed_input_is_cut() {
        let e = super::Error::input(std::path::Path::new("f.npy"), "x".repeat(50_000_000), "fix");
        assert!(e.to_string().len() < 600);
        assert!(e.to_string().contains("more bytes"));
    }
}

#[cfg(test)]
mod kind_tests {
    use super::*;

    /// Each kind says what and where; the library text names parameters, never flags
    /// (common practice, no source).
    #[test]
    fn each_kind_says_what_and_where() {
        let e = Error::data_at("interpolate", "class index 9 is not there", "grow fewer");
        assert_eq!(
            e.to_string(),
            "interpolate: class index 9 is not there\n  fix: grow fewer"
        );
        let e = Error::param("k", "k-NN needs at least one neighbour", "set k to 1");
        assert!(e.to_string().starts_with("invalid k: "), "{e}");
        let e = Error::Resource {
            what: "growing a.npz".into(),
            resource: "memory",
            needed: "2.0 GiB (matrix 2.0 GiB)".into(),
            needed_bytes: 2 << 30,
            limit: Limit {
                bytes: 1 << 30,
                source: LimitSource::Given,
            },
            fix: "grow fewer classes".into(),
        };
        assert_eq!(
            e.to_string(),
            "growing a.npz would need about 2.0 GiB (matrix 2.0 GiB) of memory, more than the given limit (1.0 GiB)\n  fix: grow fewer classes"
        );
        assert!(!e.to_string().contains("--"));
    }
}
