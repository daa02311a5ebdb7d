//! The assessment: every method, on every fold, against the `none` baseline, with the same
//! splits for all (a paired design).

pub mod results;

pub use results::AssessResults;
