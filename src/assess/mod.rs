//! The assessment: every method, on every fold, against the `none` baseline, with the same
//! splits for all (a paired design).

mod config;
pub mod results;
mod run;
mod scatter;
mod shared_knn;
mod summary;
mod sweep;

pub use config::AssessConfig;
pub use results::{AssessResults, InputInfo};
pub use run::{assess, assess_with};
pub use summary::{LEVEL, summary_with};
pub use sweep::{Knob, SweepPoint, SweepResults, sweep};
