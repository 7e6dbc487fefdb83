//! `eigentherm inspect`: lists the sectors, datasets and attributes of files and, with
//! `--verify`, checks the eigenbasis. A failed check ends with an error (non-zero exit)
//! after the summary has been printed.

use super::args::{InputArgs, JsonArg, MemoryArg, SectorArg};
use super::output;
use crate::error::Result;
use crate::pipeline::inspect::{first_failure, inspect_files};

/// Options of `eigentherm inspect`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Input files and dataset path overrides.
    #[command(flatten)]
    pub input: InputArgs,
    /// Sector.
    #[command(flatten)]
    pub sector: SectorArg,
    /// Check orthonormality (and residuals ‖Hv − Ev‖ where a Hamiltonian is stored) on a sample of states.
    #[arg(long)]
    pub verify: bool,
    /// Output format.
    #[command(flatten)]
    pub json: JsonArg,
    /// Memory budget (no read sized by a file header may hold more).
    #[command(flatten)]
    pub memory: MemoryArg,
}

/// Runs `eigentherm inspect`.
pub fn run(args: &Args) -> Result<()> {
    let reports = inspect_files(
        &args.input.resolve_within(&args.memory)?,
        args.sector.sector.as_deref(),
        args.verify,
    )?;
    if args.json.json {
        output::print_json(&serde_json::json!({ "files": reports }))?;
    } else {
        let text: String = reports
            .iter()
            .map(crate::report::text::inspect_text)
            .collect();
        output::print(&text)?;
    }
    match first_failure(&reports) {
        Some(e) => Err(e),
        None => Ok(()),
    }
}
