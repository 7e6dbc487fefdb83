//! `eigentherm levels`: level statistics of every selected sector of every file.
//!
//! Glue only: opens each file through [`crate::input::EigenFile`], reads the ascending
//! spectrum of each selected sector, runs [`crate::analysis::levels::analyze`] and prints
//! either JSON (`--json`: `{"options": …, "sectors": [{"file", "name", …}]}`) or a
//! compact text table per sector.

use crate::analysis::levels::{self, LevelOptions, LevelReport, UnfoldMethod};
use crate::commands::common::{InputArgs, SelectArgs};
use crate::error::{Error, Result};
use crate::window::Window;
use serde::Serialize;
use std::fmt::Write as _;

/// Options of `eigentherm levels`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Input files.
    #[command(flatten)]
    pub input: InputArgs,
    /// Sector, window and output format (default window 0.25:0.75).
    #[command(flatten)]
    pub select: SelectArgs,
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
    /// Relative degeneracy tolerance: |ΔE| < TOL × mean spacing counts as degenerate.
    #[arg(long, default_value_t = 1e-10, value_name = "TOL")]
    pub degeneracy_tol: f64,
    /// Fewer levels than this in the window gives a warning.
    #[arg(long, default_value_t = 100, value_name = "N")]
    pub min_levels: usize,
}

/// The level statistics of one (file, sector).
#[derive(Debug, Clone, Serialize)]
pub struct SectorLevels {
    /// The file.
    pub file: String,
    /// Sector name.
    pub name: String,
    /// The measured figures (flattened into the same JSON object).
    #[serde(flatten)]
    pub report: LevelReport,
}

/// JSON document printed by `eigentherm levels --json`.
#[derive(Debug, Clone, Serialize)]
pub struct LevelsOutput {
    /// Options used.
    pub options: LevelOptions,
    /// One entry per (file, sector).
    pub sectors: Vec<SectorLevels>,
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
            degeneracy_tol: self.degeneracy_tol,
            min_levels: self.min_levels,
            ..LevelOptions::default()
        })
    }
}

/// Runs `eigentherm levels`.
pub fn run(args: &Args) -> Result<()> {
    let opts = args.options()?;
    let window = args.select.window_spec(Window::LEVELS)?;
    let mut sectors = Vec::new();
    for file in args.input.open()? {
        let path = file.path().to_path_buf();
        let path = &path;
        for sector in file.select(args.select.sector.as_deref())? {
            let spectrum = file.spectrum(sector)?;
            let dataset = format!("{}/energies", sector.group.trim_end_matches('/'));
            let report = levels::analyze(&spectrum.energies, &window, &opts)
                .map_err(|e| Error::dataset(path, dataset, e.to_string()))?;
            sectors.push(SectorLevels {
                file: path.display().to_string(),
                name: sector.name.clone(),
                report,
            });
        }
    }
    let out = LevelsOutput {
        options: opts,
        sectors,
    };
    if args.select.json {
        crate::report::json::print(&out)
    } else {
        print!("{}", render_text(&out.sectors));
        Ok(())
    }
}

/// Compact human-readable text of the level statistics: one block per (file, sector)
/// with the measured ⟨r̃⟩ beside the three references, KS distances, degeneracies,
/// number variance and form-factor summary, verdict and warnings.
pub fn render_text(sectors: &[SectorLevels]) -> String {
    let mut s = String::new();
    for e in sectors {
        let r = &e.report;
        let _ = writeln!(
            s,
            "{}  sector {}  window {} (indices {}..{}, {} of {} levels)",
            e.file,
            e.name,
            r.window,
            r.window_indices[0],
            r.window_indices[1],
            r.states,
            r.total_states
        );
        let _ = writeln!(
            s,
            "  {:<28} {:>10} {:>9} {:>9} {:>9}",
            "", "measured", "Poisson", "GOE", "GUE"
        );
        let _ = writeln!(
            s,
            "  {:<28} {:>10.4} {:>9.4} {:>9.4} {:>9.4}   (+/- {:.4}, {} ratios{})",
            "mean r (spacing ratio)",
            r.mean_r,
            r.reference_mean_r[0],
            r.reference_mean_r[1],
            r.reference_mean_r[2],
            r.mean_r_stderr,
            r.ratios,
            if r.skipped_ratios > 0 {
                format!(", {} skipped", r.skipped_ratios)
            } else {
                String::new()
            }
        );
        let _ = writeln!(
            s,
            "  {:<28} {:>10} {:>9.4} {:>9.4} {:>9.4}   (nearest: {})",
            "KS distance, unfolded P(s)", "", r.ks_poisson, r.ks_goe, r.ks_gue, r.nearest_ensemble
        );
        let _ = writeln!(
            s,
            "  {:<28} {:>10.3} {:>9.3} {:>9.3} {:>9.3}",
            "density of spacings < 0.25",
            r.small_spacing_density,
            levels::Ensemble::Poisson.spacing_cdf(levels::SMALL_SPACING) / levels::SMALL_SPACING,
            levels::Ensemble::Goe.spacing_cdf(levels::SMALL_SPACING) / levels::SMALL_SPACING,
            levels::Ensemble::Gue.spacing_cdf(levels::SMALL_SPACING) / levels::SMALL_SPACING,
        );
        for p in &r.number_variance {
            let _ = writeln!(
                s,
                "  {:<28} {:>10} {:>9.3} {:>9.3} {:>9.3}",
                format!("number variance L = {}", p.l),
                p.sigma2.map_or("-".to_string(), |v| format!("{v:.3}")),
                p.poisson,
                p.goe_asymptote,
                p.gue_asymptote
            );
        }
        let f = &r.form_factor;
        let _ = writeln!(
            s,
            "  form factor: plateau {:.3} (expected 1), ramp reaches 0.8 x plateau at tau = {} (GOE 0.73, GUE 0.8, Poisson at once); Heisenberg time 2pi/mean spacing = {:.4e}",
            f.plateau,
            f.plateau_onset
                .map_or("-".to_string(), |t| format!("{t:.3}")),
            f.heisenberg_time
        );
        let _ = writeln!(
            s,
            "  degenerate pairs: {} (|dE| < {:e} x mean spacing); unfolding: {}",
            r.degenerate_pairs, r.degeneracy_tol_relative, r.unfolding.method
        );
        let _ = writeln!(s, "  verdict: {}", r.verdict);
        for w in &r.warnings {
            let _ = writeln!(s, "  warning: {w}");
        }
        s.push('\n');
    }
    s
}
