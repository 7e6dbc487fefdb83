//! `eigentherm scaling` (not yet implemented).

use crate::error::{Error, Result};

/// Options of `eigentherm scaling`.
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Runs `eigentherm scaling`.
pub fn run(_args: &Args) -> Result<()> {
    Err(Error::other("'scaling' is not implemented yet"))
}
