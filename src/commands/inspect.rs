//! `eigentherm inspect` (not yet implemented).

use crate::error::{Error, Result};

/// Options of `eigentherm inspect`.
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Runs `eigentherm inspect`.
pub fn run(_args: &Args) -> Result<()> {
    Err(Error::other("'inspect' is not implemented yet"))
}
