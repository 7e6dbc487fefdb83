//! The study's output folder: `results.json` (everything), the scaling table and the
//! exponent table (α per figure and family) as CSV, Markdown and LaTeX, SVG figures, quench tables, and one self-contained `report.html`
//! (verdicts first, then the evidence, with provenance). The folder is written beside its
//! place and renamed into it as a whole ([`folder`]): a reader never sees two runs mixed,
//! and no input is ever inside what is replaced.

pub mod ensemble_figures;
pub mod figures;
pub mod folder;
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

/// Writes the study folder `out` from the results: checked first ([`folder::check_target`]:
/// never an input, nor a folder holding one, nor a folder another program wrote), written
/// into a staging folder beside it and moved into place; on an error the staging folder is
/// removed and `out` is left as it was.
pub fn write_folder(results: &StudyResults, out: &Path) -> Result<StudyFiles> {
    let inputs: Vec<PathBuf> = results
        .provenance
        .inputs
        .iter()
        .map(|i| PathBuf::from(&i.path))
        .collect();
    folder::check_target(out, &inputs)?;
    let staged = folder::staging(out)?;
    let written = write_into(results, &staged, out);
    let done = written.and_then(|w| folder::move_into_place(&staged, out).map(|()| w));
    if done.is_err() {
        let _ = std::fs::remove_dir_all(&staged);
    }
    done
}

/// Writes every file into `dir`; the paths returned are those they will have in `out`.
fn write_into(results: &StudyResults, dir: &Path, out: &Path) -> Result<StudyFiles> {
    let mut files = Vec::new();
    let mut put = |name: &str, bytes: &[u8]| -> Result<()> {
        write_atomic(&dir.join(name), bytes)?;
        files.push(out.join(name));
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
    // unique, short file names before anything is written under them
    let keyed: Vec<(String, String)> = figures
        .iter()
        .map(|(n, _, caption)| (n.clone(), caption.clone()))
        .collect();
    for ((name, _, _), stem) in figures.iter_mut().zip(folder::unique_stems(&keyed)) {
        *name = stem;
    }
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
    html.write(dir.join("report.html"))?;
    let report = out.join("report.html");
    files.push(report.clone());
    Ok(StudyFiles { report, files })
}
