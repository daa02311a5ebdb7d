//! The assessment: every method, on every fold, against the `none` baseline, with the same
//! splits for all (a paired design).

mod config;
mod from_file;
mod input;
mod method_id;
mod probe_side;
pub mod results;
mod run;
mod scatter;
mod shared_knn;
mod summary;
mod sweep;

pub use config::{AssessConfig, ResultsConfig};
pub use from_file::{FileRows, GrownFile};
pub use input::sha256_of;
pub use method_id::MethodId;
pub use probe_side::not_applicable;
pub use results::{AssessResults, InputInfo};
pub use run::{
    Progress, assess, assess_grown_observed, assess_observed, assess_with, assess_with_observed,
    fold_copies_bytes,
};
pub use summary::{LEVEL, summary_with};
pub use sweep::{Knob, SweepPoint, SweepResults, SweepValue, sweep};
