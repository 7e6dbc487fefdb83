//! `eigentherm gauge`: the flags of the adiabatic-gauge-potential command, copied as typed
//! into [`GaugeFlags`] (resolved there, as for Python).

use super::args::{InputArgs, JsonArg, MemoryArg, SectorArg, WindowArgs};
use super::output;
use crate::error::Result;
use crate::pipeline::flags::GaugeFlags;

/// Options of `eigentherm gauge`.
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
    /// Stored observable used as the perturbation V of H + λV (repeatable).
    #[arg(long = "perturbation", value_name = "NAME", required = true)]
    pub perturbations: Vec<String>,
    /// Cutoff μ of the regularised norm: an energy (0.01) or a multiple of the window's mean
    /// level spacing (12*spacing); default L mean level spacings (L = sites, else log2 D).
    #[arg(long, value_name = "MU|K*spacing", allow_hyphen_values = true)]
    pub cutoff: Option<String>,
    /// States m of the sums over m ≠ n: all stored states, or the window only.
    #[arg(long, value_name = "all|window", default_value = "all")]
    pub partners: String,
}

impl Args {
    /// The flags as typed.
    pub fn flags(&self) -> GaugeFlags {
        GaugeFlags {
            input: self.input.flags(&self.memory),
            sector: self.sector.sector.clone(),
            window: self.window.window.clone(),
            energy_window: self.window.energy_window.clone(),
            perturbations: self.perturbations.clone(),
            cutoff: self.cutoff.clone(),
            partners: Some(self.partners.clone()),
        }
    }
}

/// Runs `eigentherm gauge`.
pub fn run(args: &Args) -> Result<()> {
    let (req, opts) = args.flags().request()?;
    let out = crate::pipeline::gauge::gauge(&req, &opts)?;
    if args.json.json {
        output::print_json(&out)
    } else {
        output::print(&crate::report::text::gauge_text(&out))
    }
}
