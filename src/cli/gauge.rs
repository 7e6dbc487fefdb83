//! `eigentherm gauge`: the flags of the adiabatic-gauge-potential command, resolved into an
//! [`ElementsRequest`] and [`GaugeOptions`].

use super::args::{InputArgs, JsonArg, MemoryArg, SectorArg, WindowArgs};
use super::output;
use crate::analysis::gauge::{Cutoff, GaugeOptions, Partners};
use crate::error::{Error, Result};
use crate::pipeline::class::ClassChoice;
use crate::pipeline::elements::ElementsRequest;
use crate::window::Window;

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
    /// The pipeline's request and the analysis options.
    pub fn resolve(&self) -> Result<(ElementsRequest, GaugeOptions)> {
        let partners = match self.partners.to_ascii_lowercase().as_str() {
            "all" => Partners::All,
            "window" => Partners::Window,
            _ => {
                return Err(Error::usage(format!(
                    "--partners '{}': expected all or window",
                    self.partners
                )))
            }
        };
        let cutoff = self.cutoff.as_deref().map(Cutoff::parse).transpose()?;
        let req = ElementsRequest {
            inputs: self.input.resolve_within(&self.memory)?,
            sector: self.sector.sector.clone(),
            window: self.window.resolve(Window::MATRIX_ELEMENTS)?,
            observables: self.perturbations.clone(),
            budget: self.memory.resolve()?,
            class: ClassChoice::Auto,
            thermo: Default::default(),
        };
        Ok((req, GaugeOptions { cutoff, partners }))
    }
}

/// Runs `eigentherm gauge`.
pub fn run(args: &Args) -> Result<()> {
    let (req, opts) = args.resolve()?;
    let out = crate::pipeline::gauge::gauge(&req, &opts)?;
    if args.json.json {
        output::print_json(&out)
    } else {
        output::print(&crate::report::text::gauge_text(&out))
    }
}
