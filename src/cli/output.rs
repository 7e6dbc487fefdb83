//! Writing to stdout. Every command prints through these functions, so that a reader that
//! goes away (`eigentherm levels FILE | head`) ends the command quietly
//! ([`crate::Error::is_broken_pipe`]) instead of with an error or a panic.

use crate::error::{Error, Result};
use serde::Serialize;
use std::io::Write;

/// Writes `text` to stdout.
pub fn print(text: &str) -> Result<()> {
    let mut out = std::io::stdout().lock();
    out.write_all(text.as_bytes())
        .and_then(|()| out.flush())
        .map_err(|e| Error::io("stdout", e))
}

/// Writes `value` (an object) as pretty JSON (and a newline) to stdout, with the top-level
/// `schema_version` ([`crate::report::json::versioned`]).
pub fn print_json<T: Serialize>(value: &T) -> Result<()> {
    let mut s = serde_json::to_string_pretty(&crate::report::json::versioned(value))
        .map_err(|e| Error::other(format!("cannot serialise JSON: {e}")))?;
    s.push('\n');
    print(&s)
}
