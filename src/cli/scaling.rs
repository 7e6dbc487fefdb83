//! `eigentherm scaling`: finite-size scaling of the ETH figures across files and sectors.

use super::args::{
    ClassArg, InputArgs, JsonArg, MemoryArg, ObservableArgs, OmegaArg, SectorArg, ThermoArgs,
    WindowArgs,
};
use super::output;
use crate::error::Result;
use crate::pipeline::scaling::{scaling, ScalingRequest};
use crate::pipeline::sector::SectorSettings;
use crate::window::{Window, WindowSpec};

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
    /// The request of the scaling pipeline.
    pub fn resolve(&self) -> Result<ScalingRequest> {
        let levels_window = match &self.levels_window {
            Some(w) => WindowSpec::Fraction(Window::parse(w)?),
            None => WindowSpec::Fraction(Window::LEVELS),
        };
        Ok(ScalingRequest {
            inputs: self.input.resolve_within(&self.memory)?,
            sector: self.sector.sector.clone(),
            observables: self.observables.required()?,
            settings: SectorSettings {
                levels_window,
                window: self.window.resolve(Window::MATRIX_ELEMENTS)?,
                offdiagonal: self.omega.resolve()?,
                budget: self.memory.resolve()?,
                class: self.class.resolve()?,
                thermo: self.thermo.resolve()?,
            },
            combine_sectors: self.combine_sectors,
        })
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
