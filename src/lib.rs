//! embloom: feature-space augmentation of embedding matrices, and a leakage-free assessment of
//! how each method moves a downstream k-NN or linear probe.
//!
//! Data flows one way: [`io`] reads a file into a [`data::Dataset`]; an [`augment`] method is
//! fitted on real training rows and samples synthetic rows with provenance; [`probe`]s are
//! trained on real + synthetic rows; [`eval`] owns the splits, metrics and statistics; and
//! [`report`] renders the results. [`neighbors`] and [`pca`] serve several stages.
//!
//! A small set from the demo generator, grown by interpolation and then assessed: the
//! assessment fits every probe on real rows of the training folds (plus synthetic rows for
//! the grown method) and scores it on real held-out rows only.
//!
//! ```
//! use embloom::assess::{AssessConfig, InputInfo, assess};
//! use embloom::augment::{AugmentParams, MethodKind, Plan, Target, UnitNorm, build, grow};
//! use embloom::eval::IntervalKind;
//! use embloom::probe::{KnnParams, LinearParams, ProbeKind};
//!
//! let set = embloom::demo::street_signs(7);
//! let counts = set.class_counts();
//!
//! // Grow every class by 10 rows, each drawn between a real row and a real neighbour.
//! let method = build(MethodKind::Interpolate, &AugmentParams::default())?;
//! let plan = Plan { add: vec![10; set.n_classes()] };
//! let grown = grow(&set, method.as_ref(), &plan, false, 1, &[])?;
//! assert_eq!(grown.x.nrows(), 10 * counts.len());
//!
//! let cfg = AssessConfig {
//!     methods: vec![MethodKind::None, MethodKind::Interpolate],
//!     probes: vec![ProbeKind::Knn],
//!     folds: 3,
//!     repeats: 1,
//!     target: Target::Largest,
//!     classes: None,
//!     augment: AugmentParams::default(),
//!     unit_norm: UnitNorm::Off,
//!     knn: KnnParams::default(),
//!     linear: LinearParams::default(),
//!     interval: IntervalKind::default(),
//!     seed: 1,
//!     diagnostics: false,
//! };
//! let input = InputInfo::in_memory("street-signs (demo)", &set);
//! let results = assess(&set, &cfg, input)?;
//! // One record per (fold, method, probe): 3 folds × 2 methods × 1 probe.
//! assert_eq!(results.folds.len(), 6);
//! // Only the grown method's training folds carry synthetic rows.
//! assert!(results.folds.iter().all(|f| (f.method == "none") == (f.train_synthetic == 0)));
//! # Ok::<(), embloom::Error>(())
//! ```

#![deny(missing_docs)]

pub mod assess;
pub mod augment;
pub mod data;
pub mod demo;
pub mod error;
pub mod eval;
pub mod io;
pub mod linalg;
pub mod memory;
pub mod neighbors;
pub mod pca;
pub mod probe;
pub mod report;
pub mod rounding;
pub mod seed;

pub use data::{Dataset, FloatType};
pub use error::{Error, Result};
