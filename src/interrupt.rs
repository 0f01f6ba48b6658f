//! What a table run says when SIGINT or SIGTERM stops it: one line on stderr
//! telling how to continue, then the signal's default action, so the caller
//! sees the process killed by that signal (shells, schedulers).

use crate::app_error::AppError;
use signal_hook::consts::{SIGINT, SIGTERM};
use signal_hook::iterator::Signals;

/// From now on, SIGINT or SIGTERM prints `kzero: stopped by SIG...; {hint}`
/// on stderr and ends the process by that signal. Rows already written stay
/// on disk: the journal is written one whole line at a time.
///
/// # Errors
/// `Other` (exit 1) when the handler cannot be installed.
pub fn on_stop(hint: String) -> Result<(), AppError> {
    let mut signals = Signals::new([SIGINT, SIGTERM])
        .map_err(|e| AppError::Other(format!("cannot install the signal handler: {e}")))?;
    std::thread::spawn(move || {
        if let Some(sig) = signals.forever().next() {
            let name = if sig == SIGINT { "SIGINT" } else { "SIGTERM" };
            if std::io::IsTerminal::is_terminal(&std::io::stderr()) {
                // Start a clean line after the progress bar.
                eprint!("\r\x1b[2K");
            }
            eprintln!("kzero: stopped by {name}; {hint}");
            let _ = signal_hook::low_level::emulate_default_handler(sig);
            // Not reached for SIGINT and SIGTERM (their default ends the process).
            std::process::exit(128 + sig);
        }
    });
    Ok(())
}
