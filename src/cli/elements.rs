//! `eigentherm diagonal` and `eigentherm offdiagonal`: the flags of the matrix-element
//! commands, resolved into an [`ElementsRequest`].

use super::args::{
    ClassArg, InputArgs, JsonArg, MemoryArg, ObservableArgs, OmegaArg, SectorArg, ThermoArgs,
    WindowArgs,
};
use super::output;
use crate::error::{Error, Result};
use crate::pipeline::elements::{self, ElementsRequest};
use crate::project::PredictionStates;
use crate::window::Window;

/// Flags shared by `diagonal` and `offdiagonal`.
#[derive(Debug, Clone, clap::Args)]
pub struct Common {
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
    /// Observables.
    #[command(flatten)]
    pub observables: ObservableArgs,
    /// Memory budget.
    #[command(flatten)]
    pub memory: MemoryArg,
    /// Symmetry class.
    #[command(flatten)]
    pub class: ClassArg,
    /// Thermal source.
    #[command(flatten)]
    pub thermo: ThermoArgs,
}

impl Common {
    /// The request of the pipeline.
    pub fn resolve(&self) -> Result<ElementsRequest> {
        Ok(ElementsRequest {
            inputs: self.input.resolve_within(&self.memory)?,
            sector: self.sector.sector.clone(),
            window: self.window.resolve(Window::MATRIX_ELEMENTS)?,
            observables: self.observables.observables.clone(),
            budget: self.memory.resolve()?,
            class: self.class.resolve()?,
            thermo: self.thermo.resolve()?,
        })
    }
}

/// Options of `eigentherm diagonal`.
#[derive(Debug, clap::Args)]
pub struct DiagonalArgs {
    /// Files, sector, window, observables, memory, output.
    #[command(flatten)]
    pub common: Common,
    /// States whose A_nn feed the thermal predictions: all, window, or auto (all, except
    /// for dense observables whose all-state projection would exceed 2e11 flops).
    #[arg(long, value_name = "all|window|auto", default_value = "auto")]
    pub predictions: String,
}

/// Options of `eigentherm offdiagonal`.
#[derive(Debug, clap::Args)]
pub struct OffdiagonalArgs {
    /// Files, sector, window, observables, memory, output.
    #[command(flatten)]
    pub common: Common,
    /// Frequency cut.
    #[command(flatten)]
    pub omega: OmegaArg,
}

/// Parses `--predictions`: `None` for `auto`.
fn parse_predictions(s: &str) -> Result<Option<PredictionStates>> {
    match s.to_ascii_lowercase().as_str() {
        "auto" => Ok(None),
        "all" => Ok(Some(PredictionStates::All)),
        "window" => Ok(Some(PredictionStates::Window)),
        _ => Err(Error::usage(format!(
            "--predictions '{s}': expected all, window or auto"
        ))),
    }
}

/// Runs `eigentherm diagonal`.
pub fn run_diagonal(args: &DiagonalArgs) -> Result<()> {
    let policy = parse_predictions(&args.predictions)?;
    let out = elements::diagonal(&args.common.resolve()?, policy)?;
    if args.common.json.json {
        output::print_json(&out)
    } else {
        output::print(&crate::report::text::diagonal_text(&out))
    }
}

/// Runs `eigentherm offdiagonal`.
pub fn run_offdiagonal(args: &OffdiagonalArgs) -> Result<()> {
    let opts = args.omega.resolve()?;
    let out = elements::offdiagonal(&args.common.resolve()?, &opts)?;
    if args.common.json.json {
        output::print_json(&out)
    } else {
        output::print(&crate::report::text::offdiagonal_text(&out))
    }
}
