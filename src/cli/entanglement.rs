//! `eigentherm entanglement`: the flags, copied as typed into [`EntanglementFlags`]
//! (resolved there, as for Python).

use super::args::{InputArgs, JsonArg, MemoryArg, SectorArg, WindowArgs};
use super::output;
use crate::error::Result;
use crate::pipeline::entanglement;
use crate::pipeline::flags::EntanglementFlags;

/// Options of `eigentherm entanglement`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Input files and dataset path overrides.
    #[command(flatten)]
    pub input: InputArgs,
    /// Sector.
    #[command(flatten)]
    pub sector: SectorArg,
    /// Window (default 0.4:0.6).
    #[command(flatten)]
    pub window: WindowArgs,
    /// Output format.
    #[command(flatten)]
    pub json: JsonArg,
    /// Memory budget.
    #[command(flatten)]
    pub memory: MemoryArg,
    /// Sites of subsystem A: the cut falls after site L_A (default: L/2, rounded down).
    #[arg(long, value_name = "L_A")]
    pub cut: Option<usize>,
}

/// Runs `eigentherm entanglement`.
pub fn run(args: &Args) -> Result<()> {
    let req = EntanglementFlags {
        input: args.input.flags(&args.memory),
        sector: args.sector.sector.clone(),
        window: args.window.window.clone(),
        energy_window: args.window.energy_window.clone(),
        cut: args.cut,
    }
    .request()?;
    let out = entanglement::entanglement(&req)?;
    if args.json.json {
        output::print_json(&out)
    } else {
        output::print(&crate::report::text::entanglement_text(&out))
    }
}
