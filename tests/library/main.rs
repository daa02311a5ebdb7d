//! The library tests, linked as one binary: each module checks one library area against
//! a named reference.

#[path = "../common/mod.rs"]
mod common;

mod assess_confusion;
mod assess_digits;
mod assess_external;
mod assess_from_file;
mod assess_grown;
mod assess_intervals;
mod assess_leakage;
mod assess_probe_side;
mod assess_scatter;
mod assess_steps;
mod assess_sweep;
mod augment_borderline_adaptive;
mod augment_calibrated;
mod augment_methods;
mod augment_mix;
mod augment_rows;
mod augment_sphere;
mod augment_stream;
mod eval_diagnostics;
mod eval_interval;
mod eval_metrics;
mod eval_protocol;
mod eval_stats;
mod io_bad;
#[cfg(feature = "columnar")]
mod io_columnar;
mod io_csv_roles;
mod io_roundtrip;
mod io_table_text;
mod knn_ties;
mod neighbors_exact;
mod pca_iris;
mod probe_centroid;
mod probe_digits;
mod probe_knn_standardize;
mod probe_reweight;
mod probe_rows;
mod report_render;
