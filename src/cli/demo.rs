//! `eigentherm demo`: an invented scenario run end to end on model data built on the spot
//! (see [`crate::pipeline::demo`] for the scenario): builds the model files, verifies them,
//! and runs the full study (levels, diagonal, off-diagonal, scaling, figures, report).

use super::output;
use crate::analysis::quench::{self, state::StateSpec, QuenchOptions, TimeGrid};
use crate::error::{Error, Result};
use crate::pipeline::demo::{
    build_disorder_files, build_files, verify_files, DEMO_OBSERVABLES, DEMO_STATE, DEMO_TIMES,
    DISORDER_OBSERVABLE, DISORDER_REALIZATIONS, DISORDER_SIZES, DISORDER_STRENGTHS,
};
use crate::pipeline::quench::QuenchRequest;
use crate::pipeline::scaling::ScalingRequest;
use crate::pipeline::sector::SectorSettings;
use crate::pipeline::study::{study, StudyRequest};
use crate::pipeline::Inputs;
use crate::project::Budget;
use crate::window::{Window, WindowSpec};
use std::path::PathBuf;
use std::time::Instant;

/// Options of `eigentherm demo`.
#[derive(Debug, Clone, clap::Args)]
pub struct Args {
    /// Output folder for the model files and the report.
    #[arg(long, value_name = "DIR", default_value = "demo-out")]
    pub out: PathBuf,
    /// Chain lengths to build (comma-separated).
    #[arg(
        long,
        value_name = "L,L,...",
        value_delimiter = ',',
        default_value = "9,11,13"
    )]
    pub sizes: Vec<usize>,
    /// Skip the second scenario (the random-field chain's disorder scan).
    #[arg(long)]
    pub skip_disorder: bool,
}

/// The demo's study of `files`.
pub fn demo_request(files: Vec<PathBuf>) -> Result<StudyRequest> {
    let inputs = Inputs::files(files);
    let observables: Vec<String> = DEMO_OBSERVABLES.iter().map(|s| s.to_string()).collect();
    let budget = Budget::default();
    Ok(StudyRequest {
        scaling: ScalingRequest {
            inputs: inputs.clone(),
            sector: None,
            observables: observables.clone(),
            settings: SectorSettings {
                levels_window: WindowSpec::Fraction(Window::LEVELS),
                window: WindowSpec::Fraction(Window::MATRIX_ELEMENTS),
                offdiagonal: Default::default(),
                budget,
                class: Default::default(),
                thermo: Default::default(),
            },
            combine_sectors: false,
        },
        quench: Some(QuenchRequest {
            inputs,
            sector: None,
            observables,
            states: vec![(DEMO_STATE.to_string(), StateSpec::parse(DEMO_STATE)?)],
            grid: TimeGrid::parse(DEMO_TIMES)?,
            opts: QuenchOptions {
                drop_weight: quench::DEFAULT_DROP_WEIGHT,
                ..QuenchOptions::default()
            },
            budget,
        }),
        times_label: DEMO_TIMES.to_string(),
    })
}

/// The disorder scenario's study of `files`: the scaling pipeline on the one observable,
/// no quench.
pub fn disorder_request(files: Vec<PathBuf>) -> Result<StudyRequest> {
    let mut req = demo_request(files)?;
    req.scaling.observables = vec![DISORDER_OBSERVABLE.to_string()];
    req.quench = None;
    req.times_label = String::new();
    Ok(req)
}

/// Runs `eigentherm demo`.
pub fn run(args: &Args) -> Result<()> {
    if args.sizes.len() < 2 {
        return Err(Error::usage(
            "the demo needs at least two chain lengths for a scaling analysis",
        ));
    }
    let t0 = Instant::now();
    output::print(&format!(
        "eigentherm demo — an INVENTED scenario, with model data built on this machine:\n\
         \x20 a (fictional) team checks a spin chain in a tilted field, H = Σ σᶻσᶻ + 0.9045 Σ σˣ + 0.8090 Σ σᶻ,\n\
         \x20 before a long cluster campaign: chaotic sectors? do local magnetizations thermalize?\n\
         \x20 Contrast: the integrable transverse-field chain (no longitudinal field).\n\n\
         1. Building eigenbases (open chains, reflection sectors resolved), L = {:?}\n",
        args.sizes
    ))?;
    let files = build_files(&args.out, &args.sizes, |line| eprintln!("{line}"))?;

    output::print(
        "\n2. Verifying the files (orthonormality and residuals on a sample of states)\n",
    )?;
    for (f, n) in files.iter().zip(verify_files(&files)?) {
        output::print(&format!("  {}: {} sectors verified\n", f.display(), n))?;
    }

    output::print("\n3. Full study (levels, diagonal, off-diagonal, scaling, figures, report)\n")?;
    let out = args.out.join("report");
    let results = study(&demo_request(files)?)?;
    let written = crate::report::study::write_folder(&results, &out)?;
    output::print(&crate::report::text::verdicts_text(&results.scaling))?;
    let mut reports = vec![written.report];
    if !args.skip_disorder {
        reports.push(disorder(args)?);
    }
    let shown: Vec<String> = reports.iter().map(|p| p.display().to_string()).collect();
    output::print(&format!(
        "\nDone in {:.1} s. Reports: {}  (tables: *.md/.csv/.tex, figures: *.svg/.pdf/.png, everything: results.json)\n\
         These are numerical results on small finite systems: evidence, not proof.\n",
        t0.elapsed().as_secs_f64(),
        shown.join(", ")
    ))
}

/// The second invented scenario: the random-field chain's disorder scan; returns its report.
fn disorder(args: &Args) -> Result<PathBuf> {
    output::print(&format!(
        "\n4. Second INVENTED scenario: the same (fictional) team asks where their random-field chain\n\
         \x20 H = Σ (σˣσˣ + σʸσʸ + σᶻσᶻ) + Σ hᵢσᶻᵢ, hᵢ uniform in [−W, W], S^z = 0, stops being chaotic\n\
         \x20 at the sizes they can afford: L = {DISORDER_SIZES:?}, W = {DISORDER_STRENGTHS:?}, \
         {DISORDER_REALIZATIONS} realizations each ({DISORDER_OBSERVABLE} analysed)\n"
    ))?;
    let dir = args.out.join("disorder");
    let files = build_disorder_files(&dir, |line| eprintln!("{line}"))?;
    let results = study(&disorder_request(files)?)?;
    let out = args.out.join("disorder-report");
    let written = crate::report::study::write_folder(&results, &out)?;
    output::print(&crate::report::text::ensembles_text(
        &results.scaling.ensembles,
        results.scaling.disorder_scan.as_ref(),
    ))?;
    Ok(written.report)
}
