//! `eigentherm levels` (not yet implemented).

use crate::error::{Error, Result};

/// Options of `eigentherm levels`.
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Runs `eigentherm levels`.
pub fn run(_args: &Args) -> Result<()> {
    Err(Error::other("'levels' is not implemented yet"))
}
