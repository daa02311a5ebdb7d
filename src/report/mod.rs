//! Rendering assessment results: terminal table, JSON, CSV, HTML with inline SVG.
//!
//! Every output is rendered from one [`AssessResults`](crate::assess::AssessResults) value, so
//! the table, the CSV files and the HTML page cannot disagree. Rendering is pure (results in,
//! text out); only [`write_report_dir`] touches the disk, and it does so atomically.

mod charts;
mod csv;
mod display_name;
mod escape;
mod figures;
mod html;
mod svg;
mod table;
mod write;

pub use csv::{
    confusion_changes_csv, diagnostics_csv, folds_csv, per_class_csv, summary_csv, sweep_csv,
};
pub use display_name::{display_name, display_text, table_name};
pub use html::html_report;
pub use table::{sweep_table, terminal_table};
pub use write::{write_report_dir, write_report_dir_guarded};

/// Printed wherever gains are reported: synthetic rows support a decision, they do not make it.
pub const CAUTION: &str = "Synthetic rows are not observations: validate any probe trained with \
them on real held-out data; in medical or safety-relevant work defer to local rules and \
licensed practice.";
