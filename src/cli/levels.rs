//! `eigentherm levels`: level statistics of every selected sector of every file.

use super::args::{ClassArg, InputArgs, JsonArg, MemoryArg, SectorArg, WindowArgs};
use super::output;
use crate::analysis::levels::LevelOptions;
use crate::error::Result;
use crate::pipeline::flags::LevelsFlags;

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
    #[arg(long, default_value_t = LevelOptions::default().ratio_bins, value_name = "N")]
    pub bins: usize,
    /// Width of the Gaussian filter of the spectral form factor, in standard deviations of the unfolded levels.
    #[arg(long, default_value_t = LevelOptions::default().sff_eta, value_name = "ETA")]
    pub sff_eta: f64,
    /// Tolerance ε of the Thouless time: the connected form factor counts as on the
    /// random-matrix curve while |log10(K_c / K_RMT)| < ε.
    #[arg(long, default_value_t = LevelOptions::default().sff_tolerance, value_name = "EPS")]
    pub thouless_tolerance: f64,
    /// Relative degeneracy tolerance: |ΔE| < TOL × mean spacing counts as degenerate.
    #[arg(long, default_value_t = LevelOptions::default().degeneracy_tol, value_name = "TOL")]
    pub degeneracy_tol: f64,
    /// Fewer levels than this in the window gives a warning.
    #[arg(long, default_value_t = LevelOptions::default().min_levels, value_name = "N")]
    pub min_levels: usize,
}

impl Args {
    /// The flags as typed.
    pub fn flags(&self) -> LevelsFlags {
        LevelsFlags {
            input: self.input.flags(&self.memory),
            sector: self.sector.sector.clone(),
            window: self.window.window.clone(),
            energy_window: self.window.energy_window.clone(),
            class: Some(self.class.class.clone()),
            unfold: self.unfold.clone(),
            unfold_degree: self.unfold_degree,
            bins: Some(self.bins),
            sff_eta: Some(self.sff_eta),
            thouless_tolerance: Some(self.thouless_tolerance),
            degeneracy_tol: Some(self.degeneracy_tol),
            min_levels: Some(self.min_levels),
        }
    }

    /// The analysis options given on the command line.
    pub fn options(&self) -> Result<LevelOptions> {
        self.flags().options()
    }
}

/// Runs `eigentherm levels`.
pub fn run(args: &Args) -> Result<()> {
    let out = args.flags().request()?.run()?;
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
