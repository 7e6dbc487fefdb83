//! `eigentherm quench`: quench dynamics of initial states from the stored eigenbasis.

use super::args::{DynamicsArgs, InputArgs, JsonArg, MemoryArg, ObservableArgs, SectorArg};
use super::output;
use crate::error::Result;
use crate::pipeline::flags::QuenchFlags;
use crate::pipeline::quench::{quench_all, QuenchRequest};

/// Options of `eigentherm quench`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Input files and dataset path overrides.
    #[command(flatten)]
    pub input: InputArgs,
    /// Observables (under `observables/` in each sector; at least one).
    #[command(flatten)]
    pub observables: ObservableArgs,
    /// Initial states (at least one) and time grid.
    #[command(flatten)]
    pub dynamics: DynamicsArgs,
    /// Full width ΔE of the microcanonical shell [default: 5% of the spectral width].
    #[arg(long, value_name = "DE")]
    pub shell_width: Option<f64>,
    /// Smallest weight of the state on the stored eigenstates (partial eigenbasis) for which its normalised projection is analyzed; below it the quench is refused.
    #[arg(long, value_name = "W", default_value_t = crate::analysis::quench::DEFAULT_MIN_WINDOW_WEIGHT)]
    pub min_window_weight: f64,
    /// Analyze the normalised projection on the stored eigenstates whatever its weight.
    #[arg(long)]
    pub renormalise: bool,
    /// Memory budget.
    #[command(flatten)]
    pub memory: MemoryArg,
    /// Sector (default: every sector where the state has weight).
    #[command(flatten)]
    pub sector: SectorArg,
    /// Output format.
    #[command(flatten)]
    pub json: JsonArg,
}

impl Args {
    /// The flags as typed.
    pub fn flags(&self) -> QuenchFlags {
        QuenchFlags {
            input: self.input.flags(&self.memory),
            sector: self.sector.sector.clone(),
            observables: self.observables.observables.clone(),
            dynamics: self.dynamics.flags(),
            shell_width: self.shell_width,
            min_window_weight: Some(self.min_window_weight),
            renormalise: self.renormalise,
        }
    }

    /// The request of the pipeline.
    pub fn resolve(&self) -> Result<QuenchRequest> {
        self.flags().request()
    }
}

/// Runs `eigentherm quench`.
pub fn run(args: &Args) -> Result<()> {
    let results = quench_all(&args.resolve()?)?;
    if args.json.json {
        output::print_json(&serde_json::json!({ "files": results }))
    } else {
        let text: String = results
            .iter()
            .map(crate::report::text::quench_text)
            .collect();
        output::print(&text)
    }
}
