//! The assessment: every method, on every fold, against the `none` baseline, with the same
//! splits for all (a paired design).

mod config;
mod from_file;
mod input;
pub mod results;
mod run;
mod scatter;
mod shared_knn;
mod summary;
mod sweep;

pub use config::AssessConfig;
pub use from_file::{FileRows, GrownFile, MethodId};
pub use input::sha256_of;
pub use results::{AssessResults, InputInfo};
pub use run::{
    Progress, assess, assess_grown_observed, assess_observed, assess_with, assess_with_observed,
};
pub use summary::{LEVEL, summary_with};
pub use sweep::{Knob, SweepPoint, SweepResults, sweep};
