//! `eigentherm diagonal` and `eigentherm offdiagonal`: the flags of the matrix-element
//! commands, resolved into an [`ElementsRequest`].

use super::args::{
    ClassArg, InputArgs, JsonArg, MemoryArg, ObservableArgs, OmegaArg, SectorArg, ThermoArgs,
    WindowArgs,
};
use super::output;
use crate::error::Result;
use crate::pipeline::elements::{self, ElementsRequest};
use crate::pipeline::flags::{self, ElementsFlags};

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
    /// The flags as typed.
    pub fn flags(&self) -> ElementsFlags {
        ElementsFlags {
            input: self.input.flags(&self.memory),
            sector: self.sector.sector.clone(),
            window: self.window.window.clone(),
            energy_window: self.window.energy_window.clone(),
            observables: self.observables.observables.clone(),
            class: Some(self.class.class.clone()),
            thermo: self.thermo.flags(),
        }
    }

    /// The request of the pipeline.
    pub fn resolve(&self) -> Result<ElementsRequest> {
        self.flags().request()
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
    /// Also write (E_n, A_nn) of every projected state (JSON `per_state`).
    #[arg(long)]
    pub per_state: bool,
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

/// Runs `eigentherm diagonal`.
pub fn run_diagonal(args: &DiagonalArgs) -> Result<()> {
    let policy = flags::predictions(Some(&args.predictions))?;
    let out = elements::diagonal(&args.common.resolve()?, policy, args.per_state)?;
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
