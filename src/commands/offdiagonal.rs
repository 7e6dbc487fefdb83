//! `eigentherm offdiagonal` (not yet implemented).

use crate::error::{Error, Result};

/// Options of `eigentherm offdiagonal`.
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Runs `eigentherm offdiagonal`.
pub fn run(_args: &Args) -> Result<()> {
    Err(Error::other("'offdiagonal' is not implemented yet"))
}
