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
