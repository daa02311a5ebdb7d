//! The progress bar, drawn on stderr from the library's progress callback.

use std::io::IsTerminal;

use indicatif::{ProgressBar, ProgressStyle};

use embloom::assess::Progress;

/// Whether progress bars should be drawn: not with `--quiet`, not when stderr is no terminal.
pub fn show_progress(quiet: bool) -> bool {
    !quiet && std::io::stderr().is_terminal()
}

/// The bar of an assessment's fold loop (hidden when `show` is false).
pub struct FoldBar(ProgressBar);

impl FoldBar {
    pub fn new(show: bool) -> FoldBar {
        if !show {
            return FoldBar(ProgressBar::hidden());
        }
        let bar = ProgressBar::new(0);
        if let Ok(style) = ProgressStyle::with_template("{bar:30} {pos}/{len} {msg} [{elapsed}]") {
            bar.set_style(style);
        }
        FoldBar(bar)
    }

    /// Move the bar to where the library says the fold loop is.
    pub fn update(&self, p: Progress) {
        self.0.set_length(p.total as u64);
        self.0.set_position(p.done as u64);
        self.0
            .set_message(format!("fold {}/{} {}", p.fold, p.folds, p.method));
    }

    pub fn finish(&self) {
        self.0.finish_and_clear();
    }
}
