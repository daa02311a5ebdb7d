//! `embloom sweep`: one method, one knob, several values, each assessed against `none`.

use std::path::PathBuf;

use indicatif::ProgressBar;

use super::assess::load;
use crate::assess::{AssessConfig, Knob, SweepResults, sweep};
use crate::augment::MethodKind;
use crate::error::{Error, Result};
use crate::io::{ReadOptions, write_atomically};

#[derive(Debug, Clone)]
pub struct SweepOptions {
    pub input: PathBuf,
    pub read: ReadOptions,
    pub config: AssessConfig,
    pub method: MethodKind,
    pub knob: Knob,
    pub values: Vec<String>,
    pub csv: Option<PathBuf>,
    pub force: bool,
}

/// Run a sweep and write its CSV when asked.
pub fn run(opts: &SweepOptions) -> Result<SweepResults> {
    if let Some(csv) = &opts.csv {
        let inputs = crate::io::output_target::inputs_of(&opts.input, &opts.read);
        crate::io::output_target::check_file(csv, opts.force, &inputs, None)?;
    }
    let (loaded, input) = load(&opts.input, &opts.read)?;
    let mut config = opts.config.clone();
    let clamped = super::assess::clamp_knn_k(&mut config, loaded.dataset.n_rows());
    let bar = if opts.config.progress {
        ProgressBar::new(opts.values.len() as u64)
    } else {
        ProgressBar::hidden()
    };
    let mut results = sweep(
        &loaded.dataset,
        &config,
        opts.method,
        opts.knob,
        &opts.values,
        input,
        |done, value| {
            bar.set_position(done as u64);
            bar.set_message(format!("{} = {value}", opts.knob));
        },
    )?;
    bar.finish_and_clear();
    results.warnings.extend(clamped);
    if let Some(csv) = &opts.csv {
        let text = crate::report::sweep_csv(&results);
        write_atomically(csv, opts.force, |tmp| {
            std::fs::write(tmp, text.as_bytes()).map_err(|e| Error::io(tmp, e))
        })?;
    }
    Ok(results)
}
