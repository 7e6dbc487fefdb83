//! Writer of our HDF5 layout (placeholder until implemented).

use super::SectorData;
use crate::error::{Error, Result};
use std::path::Path;

/// Writes `sectors` to a new HDF5 file at `path` (temporary name, then rename).
pub fn write_file(path: &Path, _sectors: &[SectorData]) -> Result<()> {
    Err(Error::file(path, "writer not implemented yet"))
}
