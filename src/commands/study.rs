//! `eigentherm study` (not yet implemented).

use crate::error::{Error, Result};

/// Options of `eigentherm study`.
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Runs `eigentherm study`.
pub fn run(_args: &Args) -> Result<()> {
    Err(Error::other("'study' is not implemented yet"))
}
