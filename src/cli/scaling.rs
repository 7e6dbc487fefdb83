//! `eigentherm scaling`: finite-size scaling of the ETH figures across files and sectors.

use super::args::{
    ClassArg, InputArgs, JsonArg, MemoryArg, ObservableArgs, OmegaArg, SectorArg, ThermoArgs,
    WindowArgs,
};
use super::output;
use crate::error::Result;
use crate::pipeline::flags::ScalingFlags;
use crate::pipeline::scaling::{scaling, ScalingRequest};

/// Flags of the per-sector pipeline (shared by `scaling` and `study`).
#[derive(Debug, Clone, clap::Args)]
pub struct PipelineArgs {
    /// Input files and dataset path overrides.
    #[command(flatten)]
    pub input: InputArgs,
    /// Sector.
    #[command(flatten)]
    pub sector: SectorArg,
    /// Window of the matrix elements (default 0.4:0.6).
    #[command(flatten)]
    pub window: WindowArgs,
    /// Observables (at least one).
    #[command(flatten)]
    pub observables: ObservableArgs,
    /// Window of the level statistics (default 0.25:0.75).
    #[arg(long, value_name = "LO:HI")]
    pub levels_window: Option<String>,
    /// Frequency cut.
    #[command(flatten)]
    pub omega: OmegaArg,
    /// Memory budget.
    #[command(flatten)]
    pub memory: MemoryArg,
    /// Symmetry class.
    #[command(flatten)]
    pub class: ClassArg,
    /// Thermal source.
    #[command(flatten)]
    pub thermo: ThermoArgs,
    /// Merge the sectors of one size into one row (default: fit each sector name apart).
    #[arg(long)]
    pub combine_sectors: bool,
}

impl PipelineArgs {
    /// The flags as typed.
    pub fn flags(&self) -> ScalingFlags {
        ScalingFlags {
            input: self.input.flags(&self.memory),
            sector: self.sector.sector.clone(),
            window: self.window.window.clone(),
            energy_window: self.window.energy_window.clone(),
            observables: self.observables.observables.clone(),
            levels_window: self.levels_window.clone(),
            omega_max: self.omega.omega_max,
            class: Some(self.class.class.clone()),
            thermo: self.thermo.flags(),
            combine_sectors: self.combine_sectors,
        }
    }

    /// The request of the scaling pipeline.
    pub fn resolve(&self) -> Result<ScalingRequest> {
        self.flags().request()
    }
}

/// Options of `eigentherm scaling`.
#[derive(Debug, Clone, clap::Args)]
pub struct Args {
    /// Files, sector, windows, observables and settings.
    #[command(flatten)]
    pub pipeline: PipelineArgs,
    /// Output format.
    #[command(flatten)]
    pub json: JsonArg,
}

/// Runs `eigentherm scaling`.
pub fn run(args: &Args) -> Result<()> {
    let (_, report) = scaling(&args.pipeline.resolve()?)?;
    if args.json.json {
        output::print_json(&report)
    } else {
        output::print(&crate::report::text::scaling_text(&report))
    }
}
