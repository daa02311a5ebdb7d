//! The command-line tests, linked as one binary: each module runs the embloom binary (or
//! checks what it writes) for one area.

#[path = "../common/mod.rs"]
mod common;

mod cli_assess;
mod cli_calibrated;
mod cli_columnar;
mod cli_confusion;
mod cli_csv_columns;
mod cli_dtypes;
mod cli_external;
mod cli_from_file;
mod cli_grow;
mod cli_inspect;
mod cli_mix;
mod cli_sweep;
mod cli_sweep_external;
mod cli_thin_classes;
mod csv_round_trip;
mod demo_data;
mod hardening_atomic;
mod hardening_catalogue;
mod hardening_determinism;
mod hardening_enospc;
mod hardening_fuzz;
mod hardening_memory;
mod input_bounds;
mod messages;
mod output_safety;
mod report_names;
mod resource_bounds;
mod terminal_names;
