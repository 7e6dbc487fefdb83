//! Writing result files.

use crate::error::{Error, Result};

/// Writes `bytes` to `path` atomically: a temporary file in the same folder, then a rename,
/// so that a crash never leaves a half-written file.
pub fn write_atomic(path: &std::path::Path, bytes: &[u8]) -> Result<()> {
    use std::io::Write;
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
