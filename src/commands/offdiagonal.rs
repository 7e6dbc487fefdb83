//! `eigentherm offdiagonal`: off-diagonal matrix elements `Aₙₘ` in a window — the
//! low-frequency variance, Gaussianity Γ, the diagonal/off-diagonal ratio and the
//! `|f(ω)|²` envelope (see [`crate::analysis::offdiagonal`]).
//!
//! The window's matrix elements of all requested observables are streamed in one pass
//! over the eigenvectors (block pairs under `--memory`) into one accumulator each;
//! no `W × W` matrix is kept.

use crate::analysis::offdiagonal::{Accumulator, OffdiagonalOptions, OffdiagonalResult};
use crate::commands::common::{InputArgs, SelectArgs};
use crate::commands::diagonal::{load_sector, Timing};
use crate::data::Operator;
use crate::error::{Error, Result};
use crate::project::{self, Budget};
use crate::window::{Window, WindowSpec};
use std::time::Instant;

/// Options of `eigentherm offdiagonal`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Input files and dataset path overrides.
    #[command(flatten)]
    pub input: InputArgs,
    /// Sector, window (default 0.4:0.6) and output format.
    #[command(flatten)]
    pub select: SelectArgs,
    /// Observables and projector memory.
    #[command(flatten)]
    pub ops: crate::commands::common::ObservableArgs,
    /// Frequency cut of the low-ω statistics (default: 10 mean level spacings of the window).
    #[arg(long, value_name = "W")]
    pub omega_max: Option<f64>,
}

/// Results of one sector of this command.
pub type SectorReport = crate::commands::common::SectorReport<OffdiagonalResult>;

/// JSON document of this command.
pub type Report = crate::commands::common::Report<OffdiagonalResult>;

/// Runs the off-diagonal analysis on every selected file, sector and observable.
pub fn compute(args: &Args) -> Result<Report> {
    let opts = Budget::from_arg(args.ops.memory.as_deref())?;
    let wspec: WindowSpec = args.select.window_spec(Window::MATRIX_ELEMENTS)?;
    let aopts = OffdiagonalOptions {
        omega_max: args.omega_max,
    };
    let files = args.input.open()?;
    let mut sectors = Vec::new();
    for f in &files {
        for s in f.select(args.select.sector.as_deref())? {
            let t0 = Instant::now();
            let mut timing = Timing::default();
            let in_sector = |e: Error| Error::dataset(f.path(), s.group.clone(), e.to_string());
            let spectrum = f.spectrum(s)?;
            let (ops, src) = load_sector(f, s, &args.ops.observables, &spectrum, opts.bytes)?;
            let refs: Vec<&Operator> = ops.iter().map(|(_, o)| o).collect();
            let range = wspec.indices(&spectrum.energies);
            let label = wspec.label();
            let mut accs = ops
                .iter()
                .map(|(name, _)| {
                    Accumulator::new(name, &spectrum.energies, range.clone(), &label, &aopts)
                })
                .collect::<Result<Vec<_>>>()
                .map_err(in_sector)?;
            timing.load_seconds = t0.elapsed().as_secs_f64();
            let mut st = project::StageTiming::default();
            project::for_each_block_timed(
                src.as_ref(),
                &refs,
                range.clone(),
                &opts,
                &mut st,
                |blk| {
                    for (acc, m) in accs.iter_mut().zip(&blk.elements) {
                        acc.add_block(blk, m)?;
                    }
                    Ok(())
                },
            )
            .map_err(in_sector)?;
            timing.add_projector(&st);
            let t_an = Instant::now();
            let observables = accs
                .into_iter()
                .map(Accumulator::finish)
                .collect::<Result<Vec<_>>>()
                .map_err(in_sector)?;
            timing.analyse_seconds += t_an.elapsed().as_secs_f64();
            timing.total_seconds = t0.elapsed().as_secs_f64();
            sectors.push(SectorReport {
                file: f.path().display().to_string(),
                name: s.name.clone(),
                n_states: spectrum.len(),
                dim: s.dim,
                prediction_states: None,
                timing,
                observables,
            });
        }
    }
    Ok(Report {
        memory_budget: opts.bytes,
        sectors,
    })
}

/// Human-readable rendering of the report.
pub fn render_text(r: &Report) -> String {
    use std::fmt::Write;
    let mut t = String::new();
    for s in &r.sectors {
        let _ = writeln!(t, "{} [{}]: {} states", s.file, s.name, s.n_states);
        for o in &s.observables {
            let _ = writeln!(
                t,
                "  {}: window {} ({} states, {} elements), mean level spacing {:.4e}",
                o.name, o.window, o.states, o.field, o.mean_level_spacing
            );
            let _ = writeln!(
                t,
                "    omega_max = {:.4e} ({})",
                o.omega_max, o.omega_max_rule
            );
            let _ = writeln!(
                t,
                "    pairs {}: low_omega_variance {:.4e} ± {:.1e}",
                o.pairs, o.low_omega_variance, o.low_omega_variance_stderr
            );
            let _ = writeln!(
                t,
                "    gaussian_ratio {:.4} ± {:.4} (Gaussian: {:.4}); excess kurtosis {:.3} (Gaussian: 0)",
                o.gaussian_ratio, o.gaussian_ratio_stderr, o.gaussian_ratio_expected, o.excess_kurtosis
            );
            let _ = writeln!(
                t,
                "    diag_offdiag_ratio {:.4} ± {:.4} (random-matrix value: {}), fluct_variance {:.4e}",
                o.diag_offdiag_ratio,
                o.diag_offdiag_ratio_stderr,
                o.diag_offdiag_ratio_expected,
                o.fluct_variance
            );
            match &o.plateau {
                Some(p) => {
                    let _ = writeln!(
                        t,
                        "    envelope flat (random-matrix regime) up to omega = {:.4e}, plateau {:.4e}",
                        p.omega, p.value
                    );
                }
                None => {
                    let _ = writeln!(t, "    envelope: too few pairs to locate a plateau");
                }
            }
            let _ = writeln!(
                t,
                "    envelope (log bins; |f|^2 = e^S |A|^2, DOS width {:.4}):",
                o.dos_width
            );
            let _ = writeln!(
                t,
                "    {:>11} {:>8} {:>11} {:>11} {:>11}",
                "omega", "count", "|A|^2", "stderr", "|f|^2"
            );
            for b in &o.envelope_log {
                let err = if b.mean_sq_stderr.is_finite() {
                    format!("{:.1e}", b.mean_sq_stderr)
                } else {
                    "-".to_string()
                };
                let _ = writeln!(
                    t,
                    "    {:>11.4e} {:>8} {:>11.4e} {:>11} {:>11.4e}",
                    b.omega, b.count, b.mean_sq, err, b.f_sq
                );
            }
        }
    }
    t
}

/// Runs `eigentherm offdiagonal`.
pub fn run(args: &Args) -> Result<()> {
    let report = compute(args)?;
    if args.select.json {
        let s = serde_json::to_string_pretty(&report)
            .map_err(|e| Error::other(format!("cannot write JSON: {e}")))?;
        println!("{s}");
    } else {
        print!("{}", render_text(&report));
    }
    Ok(())
}
