//! `eigentherm diagonal`: diagonal matrix elements `Aₙₙ` against the energy, the
//! eigenstate-to-eigenstate fluctuations in a window, and the thermal predictions
//! (see [`crate::analysis::diagonal`]).
//!
//! For each file, sector and observable: `Aₙₙ` of the states the predictions use
//! (streamed under `--memory`), then the window's figures.
//!
//! **Prediction policy (`--predictions`).** The microcanonical and canonical
//! predictions need `Aₙₙ` of every state. For diagonal, CSR and energy-basis
//! observables that costs `O(nnz)` per state and is always done. For a dense observable
//! it costs `2·dim²` flops per state, i.e. `n/W` times the window's own projection
//! (5× for the default window). `auto` (the default) projects all states unless the
//! dense all-state projection would exceed `2·10¹¹` flops
//! ([`project::AUTO_ALL_STATES_MAX_FLOPS`]); then only the window is projected, the
//! microcanonical shell is cut to the window and the canonical prediction is omitted
//! (the result's `predictions.note` says so). `all` and `window` force either choice.
//!
//! The JSON of each sector carries `prediction_states` and a `timing` object (seconds
//! per stage: reading not hidden behind the products, projection, analysis).

use crate::analysis::diagonal::{self, DiagonalResult};
use crate::commands::common::{InputArgs, SelectArgs};
use crate::data::{ColumnSource, Operator, OperatorForm};
use crate::error::{Error, Result};
use crate::input::{EigenFile, Sector};
use crate::project::{self, Budget, NoVectors};
use crate::window::{Window, WindowSpec};
use serde::Serialize;
use std::time::Instant;

/// Options of `eigentherm diagonal`.
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
    /// States whose A_nn feed the thermal predictions: all, window, or auto (all, except
    /// for dense observables whose all-state projection would exceed 2e11 flops).
    #[arg(long, value_name = "all|window|auto", default_value = "auto")]
    pub predictions: String,
}

/// Wall-clock seconds per stage of one sector's analysis.
#[derive(Debug, Clone, Copy, Default, Serialize)]
pub struct Timing {
    /// Reading the spectrum and the observables.
    pub load_seconds: f64,
    /// Waiting for eigenvector blocks (reading not hidden behind the products).
    pub read_seconds: f64,
    /// Time the eigenvector reader thread was busy (overlapped with the products).
    pub read_busy_seconds: f64,
    /// Matrix products of the projection.
    pub project_seconds: f64,
    /// Reductions and statistics of the analysis.
    pub analyse_seconds: f64,
    /// Whole sector, from opening to the last figure.
    pub total_seconds: f64,
    /// Eigenvector columns per block.
    pub block_states: usize,
    /// Number of blocks.
    pub blocks: usize,
}

impl Timing {
    /// Adds the projector's stage times.
    pub fn add_projector(&mut self, t: &project::StageTiming) {
        self.read_seconds += t.read_wait_seconds;
        self.read_busy_seconds += t.read_seconds;
        self.project_seconds += t.project_seconds;
        self.analyse_seconds += t.sink_seconds;
        self.block_states = t.block_states;
        self.blocks = t.blocks;
    }
}

/// Parses `--predictions`: `None` for `auto`.
fn parse_predictions(s: &str) -> Result<Option<project::PredictionStates>> {
    match s.to_ascii_lowercase().as_str() {
        "auto" => Ok(None),
        "all" => Ok(Some(project::PredictionStates::All)),
        "window" => Ok(Some(project::PredictionStates::Window)),
        _ => Err(Error::usage(format!(
            "--predictions '{s}': expected all, window or auto"
        ))),
    }
}

/// Results of one sector of this command.
pub type SectorReport = crate::commands::common::SectorReport<DiagonalResult>;

/// JSON document of this command.
pub type Report = crate::commands::common::Report<DiagonalResult>;

/// Named operators of a sector with the column source they need.
pub(crate) type SectorOperators = (Vec<(String, Operator)>, Box<dyn ColumnSource>);

/// The operators named `names` (every observable of the sector when empty) and the
/// column source they need: the eigenvector reader, or [`NoVectors`] when every operator
/// is stored in the energy basis and no eigenvectors are stored.
///
/// Dense and energy-basis operators are held in memory whole (`rows·cols·s` bytes for
/// elements of `s` bytes); when together they exceed `budget_bytes` (the `--memory`
/// budget) nothing is read and the error names the largest of them.
pub(crate) fn load_sector(
    file: &EigenFile,
    sector: &Sector,
    names: &[String],
    energies: &crate::data::Spectrum,
    budget_bytes: usize,
) -> Result<SectorOperators> {
    let names: Vec<String> = if names.is_empty() {
        sector.observables.iter().map(|o| o.name.clone()).collect()
    } else {
        names.to_vec()
    };
    if names.is_empty() {
        return Err(Error::dataset(
            file.path(),
            sector.group.clone(),
            "the sector has no observables (give one with --observable-path NAME=PATH)",
        ));
    }
    check_dense_fit(file, sector, &names, budget_bytes)?;
    let ops = names
        .iter()
        .map(|n| file.observable(sector, n).map(|op| (n.clone(), op)))
        .collect::<Result<Vec<_>>>()?;
    let all_energy = ops
        .iter()
        .all(|(_, o)| o.form() == OperatorForm::EnergyBasis);
    let src: Box<dyn ColumnSource> = if all_energy && sector.dim.is_none() {
        Box::new(NoVectors { n: energies.len() })
    } else {
        Box::new(file.vectors(sector, energies)?)
    };
    Ok((ops, src))
}

/// Fails when the dense and energy-basis observables among `names` need more memory,
/// held whole, than the budget (see [`load_sector`]).
fn check_dense_fit(
    file: &EigenFile,
    sector: &Sector,
    names: &[String],
    budget_bytes: usize,
) -> Result<()> {
    let whole: Vec<(&crate::input::ObservableInfo, f64)> = sector
        .observables
        .iter()
        .filter(|o| names.contains(&o.name))
        .filter(|o| matches!(o.form, OperatorForm::Dense | OperatorForm::EnergyBasis))
        .map(|o| {
            let elem = match o.field {
                crate::data::Field::Real => 8.0,
                crate::data::Field::Complex => 16.0,
            };
            (o, o.shape.iter().map(|&x| x as f64).product::<f64>() * elem)
        })
        .collect();
    let total: f64 = whole.iter().map(|(_, b)| b).sum();
    if total <= budget_bytes as f64 {
        return Ok(());
    }
    let Some((big, bytes)) = whole.iter().max_by(|a, b| a.1.total_cmp(&b.1)) else {
        return Ok(());
    };
    let shape: Vec<String> = big.shape.iter().map(|x| x.to_string()).collect();
    Err(Error::dataset(
        file.path(),
        big.path.clone(),
        format!(
            "{} observable of shape {} needs {} in memory ({} for all observables held whole), more than the memory budget {}: give a larger --memory, or store it in CSR or diagonal form",
            big.form,
            shape.join("×"),
            crate::project::human_bytes(*bytes),
            crate::project::human_bytes(total),
            crate::project::human_bytes(budget_bytes as f64)
        ),
    ))
}

/// Runs the diagonal analysis on every selected file, sector and observable.
pub fn compute(args: &Args) -> Result<Report> {
    let opts = Budget::from_arg(args.ops.memory.as_deref())?;
    let wspec: WindowSpec = args.select.window_spec(Window::MATRIX_ELEMENTS)?;
    let policy = parse_predictions(&args.predictions)?;
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
            let n = spectrum.len();
            let range = wspec.indices(&spectrum.energies);
            let which = policy
                .unwrap_or_else(|| project::auto_prediction_states(&refs, s.dim.unwrap_or(0), n));
            let states = match which {
                project::PredictionStates::All => 0..n,
                project::PredictionStates::Window => range.clone(),
            };
            timing.load_seconds = t0.elapsed().as_secs_f64();
            let mut st = project::StageTiming::default();
            let diags =
                project::project_diagonal_timed(src.as_ref(), &refs, states, &opts, &mut st)
                    .map_err(in_sector)?;
            timing.add_projector(&st);
            let t_an = Instant::now();
            let mut observables = Vec::new();
            for ((name, _), d) in ops.iter().zip(&diags) {
                let r = match which {
                    project::PredictionStates::All => diagonal::analyse(
                        name,
                        &spectrum.energies,
                        d,
                        range.clone(),
                        &wspec.label(),
                        s.dim,
                    ),
                    project::PredictionStates::Window => diagonal::analyse_window(
                        name,
                        &spectrum.energies,
                        d,
                        range.clone(),
                        &wspec.label(),
                        s.dim,
                    ),
                }
                .map_err(in_sector)?;
                observables.push(r);
            }
            timing.analyse_seconds += t_an.elapsed().as_secs_f64();
            timing.total_seconds = t0.elapsed().as_secs_f64();
            sectors.push(SectorReport {
                file: f.path().display().to_string(),
                name: s.name.clone(),
                n_states: n,
                dim: s.dim,
                prediction_states: Some(which),
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

fn opt(x: Option<f64>) -> String {
    x.map_or("-".to_string(), |v| format!("{v:.5}"))
}

/// Human-readable rendering of the report.
pub fn render_text(r: &Report) -> String {
    use std::fmt::Write;
    let mut t = String::new();
    for s in &r.sectors {
        let _ = writeln!(
            t,
            "{} [{}]: {} states{}",
            s.file,
            s.name,
            s.n_states,
            s.dim.map_or(String::new(), |d| format!(", dimension {d}"))
        );
        let _ = writeln!(
            t,
            "  predictions from {} states; time: read {:.2} s (waited), project {:.2} s, analyse {:.2} s",
            match s.prediction_states.unwrap_or(project::PredictionStates::All) {
                project::PredictionStates::All => "all",
                project::PredictionStates::Window => "the window's",
            },
            s.timing.read_seconds,
            s.timing.project_seconds,
            s.timing.analyse_seconds
        );
        for o in &s.observables {
            let _ = writeln!(
                t,
                "  {}: window {} ({} states), mean A_nn = {:.6}",
                o.name, o.window, o.states, o.mean
            );
            let _ = writeln!(
                t,
                "    |A_n+1 - A_n|: mean {:.4e}, max {:.4e}; fluct_variance = {:.4e} ± {:.1e}; residual rms {:.4e}",
                o.diff_mean_abs, o.diff_max_abs, o.fluct_variance, o.fluct_variance_stderr, o.residual_rms
            );
            let _ = writeln!(t, "    smooth A(E): {}", o.smooth_rule);
            let _ = writeln!(
                t,
                "    {:>10} {:>6} {:>10} {:>10} {:>10} {:>10} {:>10}",
                "E", "count", "A(E)", "stderr", "micro", "beta", "canonical"
            );
            for b in &o.smooth {
                let _ = writeln!(
                    t,
                    "    {:>10.4} {:>6} {:>10.5} {:>10} {:>10} {:>10} {:>10}",
                    b.energy,
                    b.count,
                    b.mean,
                    opt(b.stderr),
                    opt(b.microcanonical),
                    opt(b.beta),
                    opt(b.canonical)
                );
            }
            let p = &o.predictions;
            let dev = |d: &Option<diagonal::Deviation>| {
                d.as_ref().map_or("-".to_string(), |d| {
                    format!(
                        "max {:.4e}, rms {:.4e} over {} bins",
                        d.max_abs, d.rms, d.bins
                    )
                })
            };
            let _ = writeln!(
                t,
                "    A(E) - microcanonical (shell half-width {:.4}): {}",
                p.microcanonical_half_width,
                dev(&p.microcanonical)
            );
            let _ = writeln!(t, "    A(E) - canonical at beta(E): {}", dev(&p.canonical));
            if let Some(note) = &p.note {
                let _ = writeln!(t, "    note: {note}");
            }
        }
    }
    t
}

/// Runs `eigentherm diagonal`.
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
