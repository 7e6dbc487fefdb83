//! Writing result files.

use crate::error::{Error, Result};
use serde::Serialize;

/// Version of the JSON schema of every document the tool writes (`--json` of every command,
/// a study's `results.json`), the top-level key `schema_version`; described by
/// `docs/schema/eigentherm.schema.json`. Raised when a key changes meaning or shape.
/// 2: `schema_version` added; `sector` beside `name` in every per-sector record; integer
/// dimensions in scaling rows; the quench's `overall.microcanonical` an object as
/// elsewhere; CSV error columns `_stderr`.
pub const SCHEMA_VERSION: u32 = 2;

/// A JSON document: `schema_version` first, then the keys of `body` (an object).
#[derive(Debug, Serialize)]
pub struct Versioned<'a, T: Serialize> {
    /// [`SCHEMA_VERSION`].
    pub schema_version: u32,
    /// The document's own keys.
    #[serde(flatten)]
    pub body: &'a T,
}

/// `body` with the top-level `schema_version` (`body` must serialise as an object).
pub fn versioned<T: Serialize>(body: &T) -> Versioned<'_, T> {
    Versioned {
        schema_version: SCHEMA_VERSION,
        body,
    }
}

/// Writes `bytes` to `path` atomically: a temporary file in the same folder, then a rename,
/// so that a crash never leaves a half-written file.
pub fn write_atomic(path: &std::path::Path, bytes: &[u8]) -> Result<()> {
    use std::io::Write;
    crate::error::require_replaceable(path)?;
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(std::path::Path::new("."));
    let mut tmp = tempfile::NamedTempFile::new_in(dir).map_err(|e| Error::io(path, e))?;
    tmp.write_all(bytes).map_err(|e| Error::io(path, e))?;
    // temporary files are created private (0600); results are ordinary files (0644)
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        tmp.as_file()
            .set_permissions(std::fs::Permissions::from_mode(0o644))
            .map_err(|e| Error::io(path, e))?;
    }
    tmp.persist(path).map_err(|e| Error::io(path, e.error))?;
    Ok(())
}
