//! `eigentherm diagonal` (not yet implemented).

use crate::error::{Error, Result};

/// Options of `eigentherm diagonal`.
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Runs `eigentherm diagonal`.
pub fn run(_args: &Args) -> Result<()> {
    Err(Error::other("'diagonal' is not implemented yet"))
}
