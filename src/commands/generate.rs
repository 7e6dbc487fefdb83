//! `eigentherm generate` (not yet implemented).

use crate::error::{Error, Result};

/// Options of `eigentherm generate`.
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Runs `eigentherm generate`.
pub fn run(_args: &Args) -> Result<()> {
    Err(Error::other("'generate' is not implemented yet"))
}
