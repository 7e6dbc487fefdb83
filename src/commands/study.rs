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
    /// Observable to analyse (repeatable, at least one).
    #[arg(long = "observable", value_name = "NAME", required = true)]
    pub observables: Vec<String>,
    /// Output folder (created when missing).
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
    /// Window of the level statistics (default 0.25:0.75).
    #[arg(long, value_name = "LO:HI")]
    pub levels_window: Option<String>,
    /// Frequency cut of the low-ω statistics (default: 10 mean level spacings of the window).
    #[arg(long, value_name = "W")]
    pub omega_max: Option<f64>,
    /// Working-memory budget of the projector, e.g. 6G or 512M (default: half the machine's memory).
    #[arg(long, value_name = "SIZE")]
    pub memory: Option<String>,
    /// Merge the sectors of one size into one scaling row (default: fit each sector name apart).
    #[arg(long)]
    pub combine_sectors: bool,
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
        args.levels_window.as_deref(),
        args.omega_max,
        args.memory.as_deref(),
    )?;
    let mut params = vec![
        ("observables".to_string(), args.observables.join(", ")),
        ("matrix-element window".to_string(), st.window.label()),
        ("levels window".to_string(), st.levels_window.label()),
        (
            "omega_max".to_string(),
            args.omega_max.map_or(
                "default: 10 mean level spacings of the window".to_string(),
                |w| w.to_string(),
            ),
        ),
        (
            "memory budget (bytes)".to_string(),
            st.project.budget_bytes.to_string(),
        ),
        (
            "sectors".to_string(),
            args.select.sector.clone().unwrap_or_else(|| "all".into()),
        ),
        (
            "combine sectors".to_string(),
            args.combine_sectors.to_string(),
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
    params.sort_by(|a, b| a.0.cmp(&b.0));
    let mut prov = Provenance::of_this_run(params);
    for f in &args.input.files {
        prov.add_input(f)?;
    }
    let analyses = scal::analyse_all(&args.input, &args.select, &args.observables, &st)?;
    let scaling = scal::build(&analyses, args.combine_sectors)?;

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

    let figures = figures(&analyses, &scaling);
    for (name, fig, _) in &figures {
        if let Ok(svg) = fig.to_svg() {
            put(&format!("{name}.svg"), svg.as_bytes())?;
        }
    }
    let results = StudyResults {
        provenance: prov.clone(),
        sectors: analyses,
        scaling,
    };
    let json = serde_json::to_string_pretty(&results)
        .map_err(|e| Error::other(format!("cannot serialise results: {e}")))?;
    put("results.json", json.as_bytes())?;

    let html = html_report(&results, prov, &figures, &table);
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
                let sm = &o.diagonal.smooth;
                let mut fig = Figure::new("E (energy units of H)", format!("⟨n|{obs}|n⟩"))
                    .series(Series::points(format!("A_nn, {}", a.label), pts).color(0))
                    .series(
                        Series::line(
                            "binned A(E)",
                            sm.iter().map(|b| (b.energy, b.mean)).collect(),
                        )
                        .with_errors(sm.iter().map(|b| b.stderr.unwrap_or(0.0)).collect())
                        .style(Style::LinePoints)
                        .color(1),
                    )
                    .legend(Legend::UpperRight);
                let can: Vec<(f64, f64)> = sm
                    .iter()
                    .filter_map(|b| b.canonical.map(|c| (b.energy, c)))
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
                    format!("Diagonal matrix elements of {obs} against energy in {} (D = {}), the binned smooth part A(E) with standard errors ({}) and the canonical prediction at β(E).", a.label, a.dimension, o.diagonal.smooth_rule),
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

fn group_by<'a>(
    analyses: &'a [SectorAnalysis],
    key: impl Fn(&SectorAnalysis) -> String,
) -> Vec<(String, Vec<&'a SectorAnalysis>)> {
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
    let mut lt = String::new();
    for a in &results.sectors {
        lt.push_str(&format!(
            "{}: ⟨r̃⟩ = {} ({} levels), nearest ensemble by KS: {:?}. {}",
            a.label,
            crate::report::table::format_uncertain(a.levels.mean_r, a.levels.mean_r_stderr),
            a.levels.states,
            a.levels.nearest_ensemble,
            a.levels.verdict
        ));
        for w in &a.levels.warnings {
            lt.push_str(&format!(" Warning: {w}"));
        }
        lt.push('\n');
    }
    lev = lev.text(lt);
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
