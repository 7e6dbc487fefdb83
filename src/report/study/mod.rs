//! The study's output folder: `results.json` (everything), the scaling table and the
//! exponent table (α per figure and family) as CSV, Markdown and LaTeX, SVG figures, quench tables, and one self-contained `report.html`
//! (verdicts first, then the evidence, with provenance). Every file is written atomically
//! (temporary name, then rename).

pub mod ensemble_figures;
pub mod figures;
pub mod page;
pub mod tables;

use crate::analysis::study::StudyResults;
use crate::error::{Error, Result};
use crate::report::json::write_atomic;
use std::path::{Path, PathBuf};

/// What [`write_folder`] wrote.
#[derive(Debug, Clone)]
pub struct StudyFiles {
    /// The report page.
    pub report: PathBuf,
    /// Every file written.
    pub files: Vec<PathBuf>,
}

/// Writes the study folder `out` (created when missing) from the results.
pub fn write_folder(results: &StudyResults, out: &Path) -> Result<StudyFiles> {
    std::fs::create_dir_all(out).map_err(|e| Error::io(out, e))?;
    let mut files = Vec::new();
    let mut put = |name: &str, bytes: &[u8]| -> Result<()> {
        let p = out.join(name);
        write_atomic(&p, bytes)?;
        files.push(p);
        Ok(())
    };
    let table = tables::scaling_table(&results.scaling)?;
    put("scaling.csv", table.to_csv().as_bytes())?;
    put("scaling.md", table.to_markdown().as_bytes())?;
    put("scaling.tex", table.to_latex().as_bytes())?;
    let exponents = tables::exponent_table(&results.scaling)?;
    put("exponents.csv", exponents.to_csv().as_bytes())?;
    put("exponents.md", exponents.to_markdown().as_bytes())?;
    put("exponents.tex", exponents.to_latex().as_bytes())?;

    if !results.scaling.ensembles.is_empty() {
        let t = tables::ensemble_table(&results.scaling.ensembles)?;
        put("ensembles.csv", t.to_csv().as_bytes())?;
        put("ensembles.md", t.to_markdown().as_bytes())?;
        put("ensembles.tex", t.to_latex().as_bytes())?;
    }
    let mut figures = figures::figures(&results.sectors, &results.scaling);
    figures.extend(ensemble_figures::ensemble_figures(&results.scaling));
    figures.extend(figures::quench_figures(&results.quench));
    let quench_tables = tables::quench_tables(&results.quench)?;
    for (name, t) in &quench_tables {
        put(&format!("{name}.csv"), t.to_csv().as_bytes())?;
        put(&format!("{name}.md"), t.to_markdown().as_bytes())?;
    }
    for (name, fig, _) in &figures {
        if let Ok(svg) = fig.to_svg() {
            put(&format!("{name}.svg"), svg.as_bytes())?;
        }
    }
    let json = serde_json::to_string_pretty(&crate::report::json::versioned(results))
        .map_err(|e| Error::other(format!("cannot serialise results: {e}")))?;
    put("results.json", json.as_bytes())?;

    let mut html = page::html_page(results, results.provenance.clone(), &figures, &table);
    if let Some(sec) = page::quench_section(&results.quench, &figures, quench_tables) {
        html.sections.push(sec);
    }
    let report = out.join("report.html");
    html.write(&report)?;
    files.push(report.clone());
    Ok(StudyFiles { report, files })
}
