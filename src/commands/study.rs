//! `eigentherm study`: every analysis on every file, sector and observable, written
//! to a folder: `results.json` (everything), the scaling table as CSV, Markdown and
//! LaTeX, SVG figures, and one self-contained `report.html` (verdicts first, then the
//! evidence, with provenance: tool version, command line, parameters, SHA-256 of each
//! input). Every file is written atomically (temporary name, then rename).

use crate::analysis::scaling::{MEAN_R_GOE, MEAN_R_GUE, MEAN_R_POISSON, RULE};
use crate::commands::common::{InputArgs, SelectArgs};
use crate::commands::scaling::{self as scal, Report as ScalingReport};
use crate::commands::sector::SectorAnalysis;
use crate::error::{Error, Result};
use crate::report::html::{Report as Html, Section, Summary};
use crate::report::json::write_atomic;
use crate::report::plot::{Axis, Bin, Figure, Legend, Series, Style};
use crate::report::provenance::Provenance;
use serde::Serialize;
use std::path::{Path, PathBuf};

/// Options of `eigentherm study`.
#[derive(Debug, Clone, clap::Args)]
pub struct Args {
    /// Input files and dataset path overrides.
    #[command(flatten)]
    pub input: InputArgs,
    /// Sector and window (default 0.4:0.6 for matrix elements); `--json` prints results.json to stdout too.
    #[command(flatten)]
    pub select: SelectArgs,
    /// Observables and pipeline settings.
    #[command(flatten)]
    pub pipeline: scal::PipelineArgs,
    /// Output folder (created when missing).
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
    /// Initial state of a quench (repeatable), as for `eigentherm quench`: stored:NAME | index:K | product:LETTERS | product:x+ (also x-, y±, z±); adds the section "Quench dynamics".
    #[arg(long = "state", value_name = "SPEC")]
    pub states: Vec<String>,
    /// Time grid of the quenches: lin:T0:T1:N or log:T0:T1:N.
    #[arg(long, value_name = "GRID", default_value = crate::analysis::quench::DEFAULT_TIMES)]
    pub times: String,
    /// Fraction of the norm the quench traces may drop (see `eigentherm quench`).
    #[arg(long, value_name = "EPS", default_value_t = crate::analysis::quench::DEFAULT_DROP_WEIGHT)]
    pub drop_weight: f64,
}

/// The quench of one initial state and one observable on every file (`results.json` key
/// `quench`).
#[derive(Debug, Clone, Serialize)]
pub struct QuenchStudy {
    /// The observable.
    pub observable: String,
    /// The state SPEC as given.
    pub state: String,
    /// One result per file (sectors combined through their embeddings).
    pub runs: Vec<crate::commands::quench::FileResult>,
}

/// Everything a study computed (`results.json`).
#[derive(Debug, Clone, Serialize)]
pub struct StudyResults {
    /// Provenance of the run.
    pub provenance: Provenance,
    /// Per-sector analyses (levels, diagonal, off-diagonal).
    pub sectors: Vec<SectorAnalysis>,
    /// Scaling rows, fits and verdicts.
    pub scaling: ScalingReport,
    /// Quench dynamics, one entry per (observable, state) (empty without `--state`).
    pub quench: Vec<QuenchStudy>,
}

/// What `study` wrote.
#[derive(Debug, Clone, Serialize)]
pub struct StudyOutput {
    /// The report page.
    pub report: PathBuf,
    /// Every file written.
    pub files: Vec<PathBuf>,
    /// The results.
    pub results: StudyResults,
}

/// Runs the study and writes its folder.
pub fn study(args: &Args) -> Result<StudyOutput> {
    let st = scal::settings(
        &args.select,
        args.pipeline.levels_window.as_deref(),
        args.pipeline.omega_max,
        args.pipeline.memory.as_deref(),
    )?;
    let mut params = vec![
        (
            "observables".to_string(),
            args.pipeline.observables.join(", "),
        ),
        ("matrix-element window".to_string(), st.window.label()),
        ("levels window".to_string(), st.levels_window.label()),
        (
            "omega_max".to_string(),
            args.pipeline.omega_max.map_or(
                "default: 10 mean level spacings of the window".to_string(),
                |w| w.to_string(),
            ),
        ),
        (
            "memory budget (bytes)".to_string(),
            st.project.bytes.to_string(),
        ),
        (
            "sectors".to_string(),
            args.select.sector.clone().unwrap_or_else(|| "all".into()),
        ),
        (
            "combine sectors".to_string(),
            args.pipeline.combine_sectors.to_string(),
        ),
        (
            "bootstrap".to_string(),
            format!(
                "{} resamples, seed {:#x}",
                crate::commands::sector::RESAMPLES,
                crate::analysis::scaling::DEFAULT_SEED
            ),
        ),
    ];
    if !args.states.is_empty() {
        params.push(("quench states".to_string(), args.states.join(", ")));
        params.push(("quench times".to_string(), args.times.clone()));
        params.push((
            "quench drop weight".to_string(),
            args.drop_weight.to_string(),
        ));
    }
    params.sort_by(|a, b| a.0.cmp(&b.0));
    let mut prov = Provenance::of_this_run(params);
    for f in &args.input.files {
        prov.add_input(f)?;
    }
    let analyses = scal::analyse_all(&args.input, &args.select, &args.pipeline.observables, &st)?;
    let scaling = scal::build(&analyses, args.pipeline.combine_sectors)?;
    let quench = quench_all(args, st.project)?;

    std::fs::create_dir_all(&args.out).map_err(|e| Error::io(&args.out, e))?;
    let mut files = Vec::new();
    let mut put = |name: &str, bytes: &[u8]| -> Result<()> {
        let p = args.out.join(name);
        write_atomic(&p, bytes)?;
        files.push(p);
        Ok(())
    };
    let table = scal::table(&scaling)?;
    put("scaling.csv", table.to_csv().as_bytes())?;
    put("scaling.md", table.to_markdown().as_bytes())?;
    put("scaling.tex", table.to_latex().as_bytes())?;

    let mut figures = figures(&analyses, &scaling);
    figures.extend(quench_figures(&quench));
    let quench_tables = quench_tables(&quench)?;
    for (name, t) in &quench_tables {
        put(&format!("{name}.csv"), t.to_csv().as_bytes())?;
        put(&format!("{name}.md"), t.to_markdown().as_bytes())?;
    }
    for (name, fig, _) in &figures {
        if let Ok(svg) = fig.to_svg() {
            put(&format!("{name}.svg"), svg.as_bytes())?;
        }
    }
    let results = StudyResults {
        provenance: prov.clone(),
        sectors: analyses,
        scaling,
        quench,
    };
    let json = serde_json::to_string_pretty(&results)
        .map_err(|e| Error::other(format!("cannot serialise results: {e}")))?;
    put("results.json", json.as_bytes())?;

    let mut html = html_report(&results, prov, &figures, &table);
    if let Some(sec) = quench_section(&results.quench, &figures, quench_tables) {
        html.sections.push(sec);
    }
    let report = args.out.join("report.html");
    html.write(&report)?;
    files.push(report.clone());
    Ok(StudyOutput {
        report,
        files,
        results,
    })
}

/// Runs `eigentherm study`.
pub fn run(args: &Args) -> Result<()> {
    let out = study(args)?;
    if args.select.json {
        crate::report::json::print(&out.results)?;
    } else {
        print!("{}", summary_text(&out.results.scaling));
        println!(
            "wrote {} files to {}; open {}",
            out.files.len(),
            args.out.display(),
            out.report.display()
        );
    }
    Ok(())
}

/// Verdict lines for the terminal, with the rule reference and the caveat.
pub fn summary_text(s: &ScalingReport) -> String {
    use std::fmt::Write;
    let mut t = String::new();
    for v in &s.verdicts {
        let _ = writeln!(t, "{:<48} {}", v.family, v.verdict.verdict);
        for r in &v.verdict.reasons {
            let _ = writeln!(t, "    - {r}");
        }
    }
    if let Some(v) = s.verdicts.first() {
        let _ = writeln!(
            t,
            "Rule: thresholds as printed in report.html and the README. Caveat: {}",
            v.verdict.caveat
        );
    }
    t
}

type Named = (String, Figure, String);

/// Builds every figure: (file stem, figure, caption).
fn figures(analyses: &[SectorAnalysis], scaling: &ScalingReport) -> Vec<Named> {
    let mut out: Vec<Named> = Vec::new();
    // ⟨r̃⟩ against size with the three references.
    let mut fig = Figure::new("L (sites) or D when sizes are unknown", "⟨r̃⟩")
        .reference(MEAN_R_POISSON, "Poisson")
        .reference(MEAN_R_GOE, "GOE")
        .reference(MEAN_R_GUE, "GUE")
        .y_range(0.3, 0.65)
        .legend(Legend::LowerRight);
    for (k, (key, members)) in group_by(analyses, |a| {
        format!("{} {}", a.model.clone().unwrap_or_default(), a.sector)
    })
    .into_iter()
    .enumerate()
    {
        let mut pts: Vec<(f64, f64, f64)> = members
            .iter()
            .map(|a| {
                (
                    a.size.map(|s| s as f64).unwrap_or(a.dimension as f64),
                    a.levels.mean_r,
                    a.levels.mean_r_stderr,
                )
            })
            .collect();
        pts.sort_by(|a, b| a.0.total_cmp(&b.0));
        fig = fig.series(
            Series::points(key.trim(), pts.iter().map(|p| (p.0, p.1)).collect())
                .with_errors(pts.iter().map(|p| p.2).collect())
                .style(Style::LinePoints)
                .color(k),
        );
    }
    out.push(("mean_r".into(), fig, "Mean ratio of consecutive level spacings ⟨r̃⟩ in the levels window against system size, with the Poisson (0.3863), GOE (0.5307) and GUE (0.5996) references (Atas et al. 2013).".into()));

    // Unfolded spacing histogram of the largest sector of each family, with the surmises.
    for (key, members) in group_by(analyses, |a| {
        format!("{} {}", a.model.clone().unwrap_or_default(), a.sector)
    }) {
        let Some(a) = members.iter().max_by_key(|a| a.dimension) else {
            continue;
        };
        let h = &a.levels.spacing_histogram;
        if h.is_empty() {
            continue;
        }
        let bins: Vec<Bin> = h
            .iter()
            .map(|b| Bin {
                lo: b.lo,
                hi: b.hi,
                value: b.density,
            })
            .collect();
        let centre = |f: &dyn Fn(&crate::analysis::levels::HistBin) -> f64| -> Vec<(f64, f64)> {
            h.iter().map(|b| (0.5 * (b.lo + b.hi), f(b))).collect()
        };
        let fig = Figure::new("s (unfolded spacing)", "P(s)")
            .histogram(format!("{} (D = {})", a.label, a.dimension), bins)
            .series(Series::line("Poisson e^(−s)", centre(&|b| b.poisson)).color(1))
            .series(Series::line("GOE surmise", centre(&|b| b.goe)).color(2))
            .series(
                Series::line("GUE surmise", centre(&|b| b.gue))
                    .style(Style::Dashed)
                    .color(3),
            )
            .legend(Legend::UpperRight);
        out.push((
            format!("spacings_{}", slug(&key)),
            fig,
            format!(
                "Unfolded nearest-neighbour spacing distribution of {} (D = {}), with the Poisson and Wigner-surmise curves (Mehta 2004); KS distances: Poisson {:.3}, GOE {:.3}, GUE {:.3}.",
                a.label, a.dimension, a.levels.ks_poisson, a.levels.ks_goe, a.levels.ks_gue
            ),
        ));
    }

    // Per observable and family: A_nn vs E of the largest sector; envelope for all sizes; fluctuations vs D.
    let mut fams: Vec<String> = scaling.rows.iter().map(|r| r.family.clone()).collect();
    fams.dedup();
    for fam in fams {
        let rows: Vec<&scal::Row> = scaling.rows.iter().filter(|r| r.family == fam).collect();
        let Some(obs) = rows.first().map(|r| r.observable.clone()) else {
            continue;
        };
        let members: Vec<&SectorAnalysis> = analyses
            .iter()
            .filter(|a| {
                rows.iter().any(|r| {
                    r.file.split('+').any(|f| f == a.file)
                        && r.sector.split('+').any(|s| s == a.sector)
                })
            })
            .collect();
        let stem = slug(&fam);
        if let Some(a) = members.iter().max_by_key(|a| a.dimension) {
            if let Some(o) = a.observables.iter().find(|o| o.name == obs) {
                let step = (o.points.len() / 2500).max(1);
                let pts: Vec<(f64, f64)> = o.points.iter().step_by(step).copied().collect();
                let curves = full_spectrum_curves(&o.points, 30);
                let mut fig = Figure::new("E (energy units of H)", format!("⟨n|{obs}|n⟩"))
                    .series(Series::points(format!("A_nn, {}", a.label), pts).color(0))
                    .series(
                        Series::line("binned A(E)", curves.iter().map(|c| (c.0, c.1)).collect())
                            .with_errors(curves.iter().map(|c| c.2).collect())
                            .style(Style::LinePoints)
                            .color(1),
                    )
                    .legend(Legend::UpperLeft);
                let can: Vec<(f64, f64)> = curves
                    .iter()
                    .filter_map(|c| c.3.map(|v| (c.0, v)))
                    .collect();
                if !can.is_empty() {
                    fig = fig.series(
                        Series::line("canonical at β(E)", can)
                            .style(Style::Dashed)
                            .color(2),
                    );
                }
                out.push((
                    format!("diagonal_{stem}"),
                    fig,
                    format!(
                        "Diagonal matrix elements of {obs} against energy in {} (D = {}): the binned mean A(E) over 30 \
                         equal-width energy bins with standard errors, and the canonical prediction Σₙe^(−βEₙ)Aₙₙ/Z at \
                         β(E) solving ⟨H⟩_β = E. The analysis window is {} ({}).",
                        a.label,
                        a.dimension,
                        o.diagonal.window,
                        o.diagonal.smooth_rule
                    ),
                ));
                // Envelope, all sizes.
                let mut env = Figure::new("ω (energy units)", "|f(Ē, ω)|² = e^S(Ē) ⟨|A_nm|²⟩")
                    .axes(Axis::Log, Axis::Log)
                    .legend(Legend::LowerLeft);
                let mut sorted = members.clone();
                sorted.sort_by_key(|a| a.dimension);
                let mut any = false;
                for (k, m) in sorted.iter().enumerate() {
                    if let Some(off) = m
                        .observables
                        .iter()
                        .find(|o| o.name == obs)
                        .and_then(|o| o.offdiagonal.as_ref())
                    {
                        let pts: Vec<(f64, f64)> = off
                            .envelope_log
                            .iter()
                            .filter(|b| b.count > 0 && b.f_sq > 0.0)
                            .map(|b| (b.omega, b.f_sq))
                            .collect();
                        if !pts.is_empty() {
                            any = true;
                            env = env.series(
                                Series::points(format!("D = {}", m.dimension), pts)
                                    .style(Style::LinePoints)
                                    .color(k),
                            );
                        }
                    }
                }
                if any {
                    out.push((
                        format!("envelope_{stem}"),
                        env,
                        format!("Off-diagonal envelope of {obs}: mean |A_nm|² in logarithmic ω bins, rescaled by e^S(Ē) with S the entropy of the smoothed density of states; under ETH the curves of different sizes collapse onto |f(ω)|²."),
                    ));
                }
            }
        }
        // Fluctuations against D with the fit.
        let pts: Vec<&&scal::Row> = rows.iter().filter(|r| r.fluct_variance > 0.0).collect();
        if pts.len() >= 2 {
            let mut fig = Figure::new("D (Hilbert-space dimension)", "fluctuation variance ½⟨ΔA²⟩")
                .axes(Axis::Log, Axis::Log)
                .series(
                    Series::points(
                        "measured",
                        pts.iter()
                            .map(|r| (r.dimension, r.fluct_variance))
                            .collect(),
                    )
                    .with_errors(pts.iter().map(|r| r.fluct_variance_stderr).collect())
                    .color(0),
                )
                .legend(Legend::UpperRight);
            if let Some(f) = scaling
                .fits
                .iter()
                .find(|f| f.family == fam && f.figure == "fluct_variance")
            {
                let (d0, d1) = (pts[0].dimension, pts[pts.len() - 1].dimension);
                let line: Vec<(f64, f64)> = (0..=20)
                    .map(|i| d0 * (d1 / d0).powf(i as f64 / 20.0))
                    .map(|d| (d, f.power_law.predict(d)))
                    .collect();
                fig = fig.series(
                    Series::line(format!("fit ∝ D^−{:.2}", f.alpha), line)
                        .style(Style::Dashed)
                        .color(1),
                );
            }
            out.push((
                format!("fluct_{stem}"),
                fig,
                format!("Eigenstate-to-eigenstate fluctuation variance of {obs} against Hilbert-space dimension with the power-law fit (ETH expects ∝ D^−1; Kim, Ikeda, Huse 2014, from memory)."),
            ));
        }
    }
    out
}

/// Runs the quench of every (observable, state) on every file (nothing without `--state`).
fn quench_all(args: &Args, project: crate::project::Budget) -> Result<Vec<QuenchStudy>> {
    use crate::analysis::quench::{state::StateSpec, QuenchOptions, TimeGrid};
    use crate::commands::quench::{quench_file, Job};
    if args.states.is_empty() {
        return Ok(Vec::new());
    }
    let grid = TimeGrid::parse(&args.times)?;
    if !(args.drop_weight.is_finite() && (0.0..1.0).contains(&args.drop_weight)) {
        return Err(Error::usage(format!(
            "--drop-weight {}: expected 0 <= EPS < 1",
            args.drop_weight
        )));
    }
    let specs = args
        .states
        .iter()
        .map(|s| StateSpec::parse(s))
        .collect::<Result<Vec<_>>>()?;
    let opts = QuenchOptions {
        drop_weight: args.drop_weight,
        ..QuenchOptions::default()
    };
    let overrides = args.input.paths.overrides()?;
    let observables = &args.pipeline.observables;
    if observables.is_empty() {
        return Ok(Vec::new());
    }
    // runs[state][file][observable]: each file is read once per state for every observable
    // (the coefficients cₙ = ⟨n|ψ⟩ do not depend on the observable; see `quench_file`)
    let mut runs: Vec<Vec<std::vec::IntoIter<crate::commands::quench::FileResult>>> = Vec::new();
    for (state, spec) in args.states.iter().zip(&specs) {
        let job = Job {
            observables,
            state,
            spec,
            sector: args.select.sector.as_deref(),
            grid,
            opts: &opts,
            budget: project,
        };
        runs.push(
            args.input
                .files
                .iter()
                .map(|f| quench_file(f, &overrides, &job).map(Vec::into_iter))
                .collect::<Result<Vec<_>>>()?,
        );
    }
    // one QuenchStudy per (observable, state), observables outermost
    let mut out = Vec::new();
    for obs in observables {
        for (state, per_file) in args.states.iter().zip(runs.iter_mut()) {
            let runs = per_file
                .iter_mut()
                .map(|r| {
                    r.next().ok_or_else(|| {
                        Error::other(format!("internal: no quench result for {obs}"))
                    })
                })
                .collect::<Result<Vec<_>>>()?;
            out.push(QuenchStudy {
                observable: obs.clone(),
                state: state.clone(),
                runs,
            });
        }
    }
    Ok(out)
}

/// Legend label of one quench run: `L = size` (or `D = dimension`) and the file stem.
fn run_label(r: &crate::commands::quench::FileResult) -> String {
    let stem = Path::new(&r.file)
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    match r.size {
        Some(l) => format!("L = {l} ({stem})"),
        None => format!("D = {} ({stem})", r.dimension),
    }
}

/// Runs of one quench grouped by model family, each group sorted by size (then dimension).
fn quench_families(q: &QuenchStudy) -> Vec<(String, Vec<&crate::commands::quench::FileResult>)> {
    let mut fams: Vec<(String, Vec<&crate::commands::quench::FileResult>)> = Vec::new();
    for r in &q.runs {
        let key = r.model.clone().unwrap_or_default();
        match fams.iter_mut().find(|(k, _)| *k == key) {
            Some((_, v)) => v.push(r),
            None => fams.push((key, vec![r])),
        }
    }
    for (_, v) in &mut fams {
        v.sort_by_key(|r| (r.size, r.dimension));
    }
    fams
}

/// Quench figures: per (observable, state, family) the trace ⟨A(t)⟩ of every size with the
/// reference values of the largest, and σ² against D_eff across sizes with the bound.
fn quench_figures(quench: &[QuenchStudy]) -> Vec<Named> {
    let mut out: Vec<Named> = Vec::new();
    for q in quench {
        for (fam, runs) in quench_families(q) {
            let Some(big) = runs.last() else { continue };
            let stem = slug(&format!("{} {} {}", q.observable, q.state, fam));
            let famtxt = if fam.is_empty() {
                String::new()
            } else {
                format!(" ({fam})")
            };
            let o = &big.overall;
            // the values in the labels tell close lines apart (their labels are stacked in
            // the order of the values)
            let value = crate::report::table::format_value;
            let mut fig = Figure::new("t (ħ / energy unit)", format!("⟨{}(t)⟩", q.observable))
                .legend(Legend::UpperRight)
                .reference(
                    o.diagonal_ensemble,
                    format!("diagonal ensemble {}", value(o.diagonal_ensemble)),
                );
            if let Some(m) = o.microcanonical {
                fig = fig.reference(m, format!("microcanonical {}", value(m)));
            }
            if let Some(c) = o.canonical {
                fig = fig.reference(c, format!("canonical {}", value(c)));
            }
            for (k, r) in runs.iter().enumerate() {
                fig = fig.series(
                    Series::line(
                        run_label(r),
                        r.overall.trace.iter().map(|p| (p.t, p.value)).collect(),
                    )
                    .color(k),
                );
            }
            out.push((
                format!("quench_trace_{stem}"),
                fig,
                format!(
                    "Quench of {}{famtxt} from the state {}: ⟨A(t)⟩ = Σₙₘ cₙ* cₘ Aₙₘ e^(i(Eₙ−Eₘ)t) for every size, with the diagonal-ensemble value Σₙ |cₙ|² Aₙₙ, the microcanonical value at E and the canonical value at β(E) of the largest size ({}) as horizontal lines.",
                    q.observable,
                    q.state,
                    run_label(big)
                ),
            ));
            let pts = |f: &dyn Fn(&crate::analysis::quench::Overall) -> f64| -> Vec<(f64, f64)> {
                runs.iter()
                    .map(|r| (r.overall.d_eff, f(&r.overall)))
                    .filter(|p| p.0 > 0.0 && p.1 > 0.0)
                    .collect()
            };
            let measured = pts(&|o| o.sigma2);
            if measured.is_empty() {
                continue;
            }
            let fig = Figure::new("D_eff = 1/Σₙ pₙ²", "σ² (infinite-time variance)")
                .axes(Axis::Log, Axis::Log)
                .legend(Legend::LowerLeft)
                .series(
                    Series::points("σ²", measured)
                        .style(Style::LinePoints)
                        .color(0),
                )
                .series(
                    Series::points("σ²_ETH (envelope estimate)", pts(&|o| o.sigma2_eth)).color(1),
                )
                .series(
                    Series::line("bound ((λmax−λmin)/2)²/D_eff", pts(&|o| o.bound))
                        .style(Style::Dashed)
                        .color(2),
                );
            out.push((
                format!("quench_fluct_{stem}"),
                fig,
                format!(
                    "Temporal fluctuations of {}{famtxt} after the quench from {}: σ² = Σ_(n≠m) pₙpₘ|Aₙₘ|² against the effective dimension D_eff across sizes, with the ETH estimate from the off-diagonal envelope and the bound σ² ≤ ((λmax−λmin)/2)²/D_eff (Reimann 2008; Short 2011; from memory). Fluctuations that fall as 1/D_eff signal relaxation.",
                    q.observable, q.state
                ),
            ));
        }
    }
    out
}

/// One table per state: (name, table) with a row per observable and file.
fn quench_tables(quench: &[QuenchStudy]) -> Result<Vec<(String, crate::report::table::Table)>> {
    use crate::report::table::{Cell, Column, Table};
    let mut states: Vec<&str> = quench.iter().map(|q| q.state.as_str()).collect();
    states.dedup();
    let mut seen = Vec::new();
    let mut out = Vec::new();
    for state in states {
        if seen.contains(&state) {
            continue;
        }
        seen.push(state);
        let mut t = Table::new(vec![
            Column::new("observable", "observable"),
            Column::new("model", "model"),
            Column::new("size", "L"),
            Column::new("dimension", "D"),
            Column::new("energy", "E"),
            Column::new("beta", "β(E)"),
            Column::new("d_eff", "D_eff"),
            Column::new("diagonal_ensemble", "diagonal ensemble"),
            Column::new("canonical", "canonical"),
            Column::new("microcanonical", "microcanonical"),
            Column::new("sigma2", "σ²"),
            Column::new("sigma2_eth", "σ²_ETH"),
            Column::new("bound", "bound"),
            Column::new("time_variance", "time variance"),
        ])
        .with_caption(format!(
            "Quench from {state}: energy, inverse temperature, effective dimension, long-time predictions and fluctuations per observable and size (time variance over the second half of the time grid)."
        ));
        for q in quench.iter().filter(|q| q.state == state) {
            for (fam, runs) in quench_families(q) {
                for r in runs {
                    let o = &r.overall;
                    t.push_row(vec![
                        Cell::from(q.observable.as_str()),
                        Cell::from(fam.as_str()),
                        Cell::from(r.size),
                        Cell::from(r.dimension),
                        Cell::from(o.energy),
                        Cell::from(o.beta),
                        Cell::from(o.d_eff),
                        Cell::from(o.diagonal_ensemble),
                        Cell::from(o.canonical),
                        Cell::from(o.microcanonical),
                        Cell::from(o.sigma2),
                        Cell::from(o.sigma2_eth),
                        Cell::from(o.bound),
                        Cell::from(o.trace_statistics.map(|s| s.variance)),
                    ])?;
                }
            }
        }
        out.push((format!("quench_{}", slug(state)), t));
    }
    Ok(out)
}

/// The report section "Quench dynamics" (none without quenches).
fn quench_section(
    quench: &[QuenchStudy],
    figures: &[Named],
    tables: Vec<(String, crate::report::table::Table)>,
) -> Option<Section> {
    if quench.is_empty() {
        return None;
    }
    let mut sec = Section::new("Quench dynamics").text(
        "Each initial state |ψ⟩ = Σₙ cₙ|n⟩ evolves as Σₙ cₙ e^(−iEₙt)|n⟩. A state given in the full \
         computational basis is split over the sectors through their embeddings and the sector \
         results are combined with their weights. If the observable thermalizes, ⟨A(t)⟩ relaxes to \
         the diagonal-ensemble value, which agrees with the microcanonical and canonical values at \
         the state's energy, and the temporal fluctuations σ² shrink as 1/D_eff with system size.",
    );
    for (_, t) in tables {
        sec = sec.table(t);
    }
    for (_, f, c) in figures.iter().filter(|(n, _, _)| n.starts_with("quench_")) {
        sec = sec.figure(f, c.clone());
    }
    Some(sec)
}

fn group_by(
    analyses: &[SectorAnalysis],
    key: impl Fn(&SectorAnalysis) -> String,
) -> Vec<(String, Vec<&SectorAnalysis>)> {
    let mut out: Vec<(String, Vec<&SectorAnalysis>)> = Vec::new();
    for a in analyses {
        let k = key(a);
        match out.iter_mut().find(|(kk, _)| *kk == k) {
            Some((_, v)) => v.push(a),
            None => out.push((k, vec![a])),
        }
    }
    out
}

/// Binned mean of `(E, A)` points over `bins` equal-width energy bins, with standard
/// errors, and the canonical prediction at each bin's mean energy:
/// `(Ē, ⟨A⟩_bin, stderr, ⟨A⟩_β(Ē))`. Bins with fewer than two points are dropped.
fn full_spectrum_curves(points: &[(f64, f64)], bins: usize) -> Vec<(f64, f64, f64, Option<f64>)> {
    use crate::analysis::thermo::{beta_of_energy, canonical_average};
    let (lo, hi) = points
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| {
            (a.min(p.0), b.max(p.0))
        });
    if hi <= lo || bins == 0 {
        return Vec::new();
    }
    let energies: Vec<f64> = points.iter().map(|p| p.0).collect();
    let values: Vec<f64> = points.iter().map(|p| p.1).collect();
    let width = (hi - lo) / bins as f64;
    let mut acc = vec![(0.0, 0.0, 0.0, 0usize); bins];
    for &(e, a) in points {
        let k = (((e - lo) / width) as usize).min(bins - 1);
        acc[k].0 += e;
        acc[k].1 += a;
        acc[k].2 += a * a;
        acc[k].3 += 1;
    }
    acc.into_iter()
        .filter(|b| b.3 >= 2)
        .map(|(se, sa, saa, n)| {
            let n_f = n as f64;
            let (e, mean) = (se / n_f, sa / n_f);
            let var = ((saa / n_f - mean * mean) * n_f / (n_f - 1.0)).max(0.0);
            let can =
                beta_of_energy(&energies, e).map(|b| canonical_average(&energies, &values, b));
            (e, mean, (var / n_f).sqrt(), can)
        })
        .collect()
}

/// One row per sector: levels, ⟨r̃⟩, KS distances, nearest ensemble, degeneracies.
fn levels_table(sectors: &[SectorAnalysis]) -> crate::report::table::Table {
    use crate::report::table::{Cell, Column, Table};
    let mut t = Table::new(vec![
        Column::new("sector", "sector"),
        Column::new("dimension", "D"),
        Column::new("levels", "levels in window"),
        Column::new("mean_r", "⟨r̃⟩"),
        Column::new("ks_poisson", "KS Poisson"),
        Column::new("ks_goe", "KS GOE"),
        Column::new("ks_gue", "KS GUE"),
        Column::new("nearest", "nearest (KS)"),
        Column::new("degenerate_pairs", "degenerate pairs"),
    ]);
    for a in sectors {
        let l = &a.levels;
        let _ = t.push_row(vec![
            Cell::from(a.label.as_str()),
            Cell::from(a.dimension),
            Cell::from(l.states),
            Cell::from((l.mean_r, l.mean_r_stderr)),
            Cell::Value(l.ks_poisson),
            Cell::Value(l.ks_goe),
            Cell::Value(l.ks_gue),
            Cell::from(format!("{:?}", l.nearest_ensemble)),
            Cell::from(l.degenerate_pairs),
        ]);
    }
    t
}

fn slug(s: &str) -> String {
    let mut out = String::new();
    for c in s.chars() {
        if c.is_ascii_alphanumeric() {
            out.push(c.to_ascii_lowercase());
        } else if !out.ends_with('_') {
            out.push('_');
        }
    }
    out.trim_matches('_').to_string()
}

fn html_report(
    results: &StudyResults,
    prov: Provenance,
    figures: &[Named],
    table: &crate::report::table::Table,
) -> Html {
    let mut h = Html::new("eigentherm study", prov);
    h.rule = Some(RULE.to_string());
    for v in &results.scaling.verdicts {
        h.summary
            .push(Summary::from_report(v.family.clone(), &v.verdict));
    }
    let find = |prefix: &'static str| {
        figures
            .iter()
            .filter(move |(n, _, _)| n.starts_with(prefix))
    };
    let mut lev = Section::new("Level statistics").text(
        "Each sector's spectrum, in the levels window: mean ratio of consecutive spacings and the unfolded spacing \
         distribution. Chaotic (GOE/GUE-like) statistics in every sector are a precondition for ETH.",
    );
    lev = lev.table(levels_table(&results.sectors));
    let mut warn = Vec::new();
    for a in &results.sectors {
        for w in &a.levels.warnings {
            warn.push(format!("{}: {w}", a.label));
        }
    }
    if !warn.is_empty() {
        lev = lev.text(format!("Warnings — {}", warn.join(" · ")));
    }
    if let Some(a) = results.sectors.first() {
        lev = lev.text(format!(
            "Classification rule: nearest reference by ⟨r̃⟩ (midpoints 0.4585 and 0.5652 between Poisson 0.3863, \
             GOE 0.5307 and GUE 0.5996; Atas et al. 2013) and, separately, smallest Kolmogorov–Smirnov distance \
             of the unfolded spacings to the Poisson and Wigner-surmise distributions. Unfolding: {}. Every \
             verdict concerns one finite spectrum: it suggests, it does not prove, chaos or integrability.",
            a.levels.unfolding.method
        ));
    }
    for (_, f, c) in find("mean_r").chain(find("spacings_")) {
        lev = lev.figure(f, c.clone());
    }
    h.sections.push(lev);
    let mut sc = Section::new("Finite-size scaling")
        .text(results.scaling.method.clone())
        .table(table.clone());
    for (_, f, c) in find("fluct_") {
        sc = sc.figure(f, c.clone());
    }
    h.sections.push(sc);
    let mut dg = Section::new("Diagonal matrix elements and thermal predictions");
    for (_, f, c) in find("diagonal_") {
        dg = dg.figure(f, c.clone());
    }
    h.sections.push(dg);
    let mut od = Section::new("Off-diagonal matrix elements");
    for (_, f, c) in find("envelope_") {
        od = od.figure(f, c.clone());
    }
    h.sections.push(od);
    h
}

/// The output folder's report path.
pub fn report_path(out: &Path) -> PathBuf {
    out.join("report.html")
}
