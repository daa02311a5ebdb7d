//! The embloom binary: parse arguments into typed options, then make one library call.

mod allocator;
mod cli;
mod signals;

use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    allocator::fix_mmap_threshold();
    let args = cli::Cli::parse();
    signals::install();
    match cli::run(args) {
        Ok(()) => ExitCode::SUCCESS,
        Err(err) => {
            let text = embloom::report::display_text(&cli::failure_text(&err), 2000, 40);
            eprintln!("error: {text}");
            ExitCode::from(2)
        }
    }
}
