//! `eigentherm levels`: level statistics of every selected sector of every file.

use super::args::{ClassArg, InputArgs, JsonArg, MemoryArg, SectorArg, WindowArgs};
use super::output;
use crate::analysis::levels::{LevelOptions, UnfoldMethod};
use crate::error::{Error, Result};
use crate::window::Window;

/// Options of `eigentherm levels`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Input files.
    #[command(flatten)]
    pub input: InputArgs,
    /// Sector.
    #[command(flatten)]
    pub sector: SectorArg,
    /// Window (default 0.25:0.75).
    #[command(flatten)]
    pub window: WindowArgs,
    /// Output format.
    #[command(flatten)]
    pub json: JsonArg,
    /// Symmetry class.
    #[command(flatten)]
    pub class: ClassArg,
    /// Memory budget (no read sized by a file header may hold more).
    #[command(flatten)]
    pub memory: MemoryArg,
    /// Unfolding: `poly:D` (least-squares polynomial of degree D fitted to the staircase N(E);
    /// the default, D = 5), `kernel:K` (Gaussian-broadened density of states with widths of K
    /// local mean spacings; `kernel` alone means K = 32) or `kernel-energy:SIGMA` (fixed width
    /// SIGMA in energy units).
    #[arg(long, value_name = "METHOD")]
    pub unfold: Option<String>,
    /// Degree of the polynomial fitted to the staircase N(E) for unfolding (same as
    /// `--unfold poly:D`; default 5).
    #[arg(long, value_name = "D")]
    pub unfold_degree: Option<usize>,
    /// Bins of the r̃ histogram on [0, 1].
    #[arg(long, default_value_t = 20, value_name = "N")]
    pub bins: usize,
    /// Width of the Gaussian filter of the spectral form factor, in standard deviations of the unfolded levels.
    #[arg(long, default_value_t = 0.5, value_name = "ETA")]
    pub sff_eta: f64,
    /// Tolerance ε of the Thouless time: the connected form factor counts as on the
    /// random-matrix curve while |log10(K_c / K_RMT)| < ε.
    #[arg(long, default_value_t = 0.08, value_name = "EPS")]
    pub thouless_tolerance: f64,
    /// Relative degeneracy tolerance: |ΔE| < TOL × mean spacing counts as degenerate.
    #[arg(long, default_value_t = 1e-10, value_name = "TOL")]
    pub degeneracy_tol: f64,
    /// Fewer levels than this in the window gives a warning.
    #[arg(long, default_value_t = 100, value_name = "N")]
    pub min_levels: usize,
}

impl Args {
    /// The analysis options given on the command line.
    pub fn options(&self) -> Result<LevelOptions> {
        if !(self.sff_eta.is_finite() && self.sff_eta > 0.0) {
            return Err(Error::usage(format!(
                "--sff-eta {}: expected a positive number",
                self.sff_eta
            )));
        }
        if !(self.thouless_tolerance.is_finite() && self.thouless_tolerance > 0.0) {
            return Err(Error::usage(format!(
                "--thouless-tolerance {}: expected a positive number",
                self.thouless_tolerance
            )));
        }
        if !(self.degeneracy_tol.is_finite() && self.degeneracy_tol >= 0.0) {
            return Err(Error::usage(format!(
                "--degeneracy-tol {}: expected a non-negative number",
                self.degeneracy_tol
            )));
        }
        if self.bins == 0 {
            return Err(Error::usage("--bins must be at least 1"));
        }
        let unfold = match (&self.unfold, self.unfold_degree) {
            (Some(_), Some(_)) => {
                return Err(Error::usage(
                    "--unfold and --unfold-degree both given: use one (--unfold-degree D is --unfold poly:D)",
                ))
            }
            (Some(m), None) => m
                .parse::<UnfoldMethod>()
                .map_err(|e| Error::usage(format!("--unfold {m}: {e}")))?,
            (None, Some(degree)) => UnfoldMethod::Polynomial { degree },
            (None, None) => UnfoldMethod::default(),
        };
        Ok(LevelOptions {
            unfold,
            ratio_bins: self.bins,
            sff_eta: self.sff_eta,
            sff_tolerance: self.thouless_tolerance,
            degeneracy_tol: self.degeneracy_tol,
            min_levels: self.min_levels,
            ..LevelOptions::default()
        })
    }
}

/// Runs `eigentherm levels`.
pub fn run(args: &Args) -> Result<()> {
    let opts = args.options()?;
    let window = args.window.resolve(Window::LEVELS)?;
    let inputs = args.input.resolve_within(&args.memory)?;
    let out = crate::pipeline::levels::levels(
        &inputs,
        args.sector.sector.as_deref(),
        &window,
        &opts,
        args.class.resolve()?,
    )?;
    if args.json.json {
        output::print_json(&out)
    } else {
        let mut text = crate::report::text::levels_text(&out.sectors);
        text.push_str(&crate::report::text::ensembles_text(
            &out.ensembles,
            out.disorder_scan.as_ref(),
        ));
        output::print(&text)
    }
}
