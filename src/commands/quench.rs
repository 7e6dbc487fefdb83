//! `eigentherm quench` (not yet implemented).

use crate::error::{Error, Result};

/// Options of `eigentherm quench`.
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Runs `eigentherm quench`.
pub fn run(_args: &Args) -> Result<()> {
    Err(Error::other("'quench' is not implemented yet"))
}
