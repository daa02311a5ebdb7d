//! embloom: feature-space augmentation of embedding matrices, and a leakage-free assessment of
//! how each method moves a downstream k-NN or linear probe.
//!
//! Data flows one way: [`io`] reads a file into a [`data::Dataset`]; an [`augment`] method is
//! fitted on real training rows and samples synthetic rows with provenance; [`probe`]s are
//! trained on real + synthetic rows; [`eval`] owns the splits, metrics and statistics; and
//! [`report`] renders the results. [`neighbors`] and [`pca`] serve several stages.

pub mod assess;
pub mod augment;
pub mod data;
pub mod demo;
pub mod error;
pub mod eval;
pub mod io;
pub mod memory;
pub mod neighbors;
pub mod pca;
pub mod probe;
pub mod report;
pub mod rounding;
pub mod seed;

pub use data::Dataset;
pub use error::{Error, Result};
