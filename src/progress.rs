//! Progress bars on stderr for long work, hidden when stderr is not a terminal.

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;

/// A progress bar of `len` steps labelled `what`; invisible when stderr is not a terminal.
pub fn bar(len: u64, what: &str) -> ProgressBar {
    let pb = ProgressBar::with_draw_target(Some(len), draw_target());
    pb.set_style(
        ProgressStyle::with_template("{msg:>12} [{bar:30}] {pos}/{len} ({eta})")
            .unwrap_or_else(|_| ProgressStyle::default_bar())
            .progress_chars("=> "),
    );
    pb.set_message(what.to_string());
    pb
}

/// A spinner for work of unknown length; invisible when stderr is not a terminal.
pub fn spinner(what: &str) -> ProgressBar {
    let pb = ProgressBar::with_draw_target(None, draw_target());
    pb.set_message(what.to_string());
    pb
}

fn draw_target() -> ProgressDrawTarget {
    if std::io::stderr().is_terminal() {
        ProgressDrawTarget::stderr()
    } else {
        ProgressDrawTarget::hidden()
    }
}

/// Prints a warning line on stderr (`warning: ...`), control characters escaped so that it
/// stays one line.
pub fn warn(msg: &str) {
    eprintln!("warning: {}", crate::error::escape(msg));
}

/// Prints a note line on stderr (`note: ...`), control characters escaped.
pub fn note(msg: &str) {
    eprintln!("note: {}", crate::error::escape(msg));
}

/// Set by [`interrupt`] (the Python module does on Ctrl-C), cleared by [`clear_interrupt`].
static INTERRUPTED: std::sync::atomic::AtomicBool = std::sync::atomic::AtomicBool::new(false);

/// The message of the error a long call ends with after [`interrupt`].
pub const INTERRUPTED_MESSAGE: &str = "interrupted";

/// Asks the running passes to stop: every block of a pass over the eigenvectors and every
/// sector checks it ([`check_interrupt`]) and the call ends with [`INTERRUPTED_MESSAGE`].
/// The binary never sets it (Ctrl-C ends the process).
pub fn interrupt() {
    INTERRUPTED.store(true, std::sync::atomic::Ordering::SeqCst);
}

/// Clears the request of [`interrupt`] (before a new call).
pub fn clear_interrupt() {
    INTERRUPTED.store(false, std::sync::atomic::Ordering::SeqCst);
}

/// `Err` once [`interrupt`] was called.
pub fn check_interrupt() -> crate::Result<()> {
    if INTERRUPTED.load(std::sync::atomic::Ordering::SeqCst) {
        return Err(crate::Error::other(INTERRUPTED_MESSAGE));
    }
    Ok(())
}
