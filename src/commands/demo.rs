//! `eigentherm demo` (not yet implemented).

use crate::error::{Error, Result};

/// Options of `eigentherm demo`.
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Runs `eigentherm demo`.
pub fn run(_args: &Args) -> Result<()> {
    Err(Error::other("'demo' is not implemented yet"))
}
