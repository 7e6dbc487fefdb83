//! `eigentherm entanglement`: the flags, resolved into an [`EntanglementRequest`].

use super::args::{InputArgs, JsonArg, MemoryArg, SectorArg, WindowArgs};
use super::output;
use crate::error::Result;
use crate::pipeline::entanglement::{self, EntanglementRequest};
use crate::window::Window;

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
    let req = EntanglementRequest {
        inputs: args.input.resolve_within(&args.memory)?,
        sector: args.sector.sector.clone(),
        window: args.window.resolve(Window::MATRIX_ELEMENTS)?,
        cut: args.cut,
        budget: args.memory.resolve()?,
    };
    let out = entanglement::entanglement(&req)?;
    if args.json.json {
        output::print_json(&out)
    } else {
        output::print(&crate::report::text::entanglement_text(&out))
    }
}
