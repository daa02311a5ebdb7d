//! SIGINT and SIGTERM: remove the temporaries of any output being written, then exit with the
//! shell's conventional status (128 + signal number: 130 and 143). SIGKILL cannot be caught;
//! after one, a hidden `.NAME.*.tmp` file or `.NAME.tmp-*` folder may remain beside the target.

use signal_hook::consts::{SIGINT, SIGTERM};
use signal_hook::iterator::Signals;

/// Installs the handlers. The work happens on a small thread of its own, so the cleanup is
/// ordinary code, not code run inside a signal handler.
pub fn install() {
    let Ok(mut signals) = Signals::new([SIGINT, SIGTERM]) else {
        return;
    };
    std::thread::spawn(move || {
        if let Some(sig) = signals.forever().next() {
            embloom::io::temporaries::remove_all();
            std::process::exit(128 + sig);
        }
    });
}
