//! Provenance of a report: tool version, command line, parameters and the SHA-256 digest
//! (FIPS 180-4) of every input file, so that a reader can tell exactly what was analyzed.
//!
//! No time stamp is recorded: the same inputs and options give a byte-identical report.

use crate::error::{Error, Result};
use serde::Serialize;
use sha2::{Digest, Sha256};
use std::io::Read;
use std::path::Path;

/// One input file: path as given, size in bytes and SHA-256 (lower-case hex).
#[derive(Debug, Clone, Serialize)]
pub struct InputFile {
    /// Path as given on the command line.
    pub path: String,
    /// Size in bytes.
    pub bytes: u64,
    /// SHA-256 of the content, 64 lower-case hex digits.
    pub sha256: String,
}

/// Everything needed to reproduce a report.
#[derive(Debug, Clone, Serialize)]
pub struct Provenance {
    /// Tool name and version, e.g. `eigentherm 0.1.0`.
    pub tool: String,
    /// The command line, shell-quoted.
    pub command_line: String,
    /// Parameters in force (name, value), defaults included.
    pub parameters: Vec<(String, String)>,
    /// Input files with their digests.
    pub inputs: Vec<InputFile>,
}

impl Provenance {
    /// Provenance of the running process (tool version and its command line) with these
    /// parameters and no inputs yet.
    pub fn of_this_run(parameters: Vec<(String, String)>) -> Self {
        Self {
            tool: format!("eigentherm {}", env!("CARGO_PKG_VERSION")),
            command_line: command_line(),
            parameters,
            inputs: Vec::new(),
        }
    }

    /// Adds an input file, hashing it ([`sha256_file`]).
    pub fn add_input(&mut self, path: impl AsRef<Path>) -> Result<()> {
        let path = path.as_ref();
        let bytes = std::fs::metadata(path)
            .map_err(|e| Error::io(path, e))?
            .len();
        let sha256 = sha256_file(path)?;
        self.inputs.push(InputFile {
            path: path.display().to_string(),
            bytes,
            sha256,
        });
        Ok(())
    }
}

/// SHA-256 of a file's content as 64 lower-case hex digits, read in 1 MiB chunks (memory
/// stays bounded for multi-gigabyte eigenbases).
pub fn sha256_file(path: impl AsRef<Path>) -> Result<String> {
    let path = path.as_ref();
    let mut f = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
    let mut h = Sha256::new();
    let mut buf = vec![0u8; 1 << 20];
    loop {
        let n = f.read(&mut buf).map_err(|e| Error::io(path, e))?;
        if n == 0 {
            break;
        }
        h.update(&buf[..n]);
    }
    Ok(h.finalize().iter().map(|b| format!("{b:02x}")).collect())
}

/// The command line of this process, each argument quoted for a POSIX shell when needed.
pub fn command_line() -> String {
    std::env::args_os()
        .map(|a| shell_quote(&a.to_string_lossy()))
        .collect::<Vec<_>>()
        .join(" ")
}

/// Quotes `s` for a POSIX shell: unchanged when made only of safe characters, otherwise in
/// single quotes with embedded single quotes as `'\''`.
pub fn shell_quote(s: &str) -> String {
    let safe = !s.is_empty()
        && s.chars()
            .all(|c| c.is_ascii_alphanumeric() || "-_./:=,+@%".contains(c));
    if safe {
        s.to_string()
    } else {
        format!("'{}'", s.replace('\'', "'\\''"))
    }
}
