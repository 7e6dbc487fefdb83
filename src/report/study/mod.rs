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

/// The files each figure is written as: SVG (inline in the page too), PDF (vector, fonts
/// embedded) and PNG at twice the size ([`crate::report::convert`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct FigureFormats {
    /// `NAME.svg`.
    pub svg: bool,
    /// `NAME.pdf`.
    pub pdf: bool,
    /// `NAME.png` at [`PNG_SCALE`] times the SVG's size.
    pub png: bool,
    /// Given by the user: a PDF or PNG that cannot be made is an error (by default: a
    /// warning, and SVG only).
    pub explicit: bool,
}

/// Scale of the PNG twins (2x for slides and high-density screens).
pub const PNG_SCALE: f32 = 2.0;

impl Default for FigureFormats {
    fn default() -> Self {
        FigureFormats {
            svg: true,
            pdf: true,
            png: true,
            explicit: false,
        }
    }
}

impl FigureFormats {
    /// `svg,pdf,png` or any non-empty subset, comma-separated (`--figure-format`).
    pub fn parse(s: &str) -> Result<FigureFormats> {
        let mut f = FigureFormats {
            svg: false,
            pdf: false,
            png: false,
            explicit: true,
        };
        for part in s.split(',').map(str::trim) {
            match part.to_ascii_lowercase().as_str() {
                "svg" => f.svg = true,
                "pdf" => f.pdf = true,
                "png" => f.png = true,
                _ => {
                    return Err(Error::usage(format!(
                        "--figure-format '{}': expected svg, pdf and/or png, comma-separated",
                        crate::error::escape(s)
                    )))
                }
            }
        }
        Ok(f)
    }
}

/// [`write_folder_as`] with every figure format.
pub fn write_folder(results: &StudyResults, out: &Path) -> Result<StudyFiles> {
    write_folder_as(results, out, FigureFormats::default())
}

/// Writes the study folder `out` from the results: checked first ([`folder::check_target`]:
/// never an input, nor a folder holding one, nor a folder another program wrote), written
/// into a staging folder beside it and moved into place; on an error the staging folder is
/// removed and `out` is left as it was.
pub fn write_folder_as(
    results: &StudyResults,
    out: &Path,
    formats: FigureFormats,
) -> Result<StudyFiles> {
    let inputs: Vec<PathBuf> = results
        .provenance
        .inputs
        .iter()
        .map(|i| PathBuf::from(&i.path))
        .collect();
    folder::check_target(out, &inputs)?;
    let staged = folder::staging(out)?;
    let written = write_into(results, &staged, out, formats);
    let done = written.and_then(|w| folder::move_into_place(&staged, out).map(|()| w));
    if done.is_err() {
        let _ = std::fs::remove_dir_all(&staged);
    }
    done
}

/// Writes every file into `dir`; the paths returned are those they will have in `out`.
fn write_into(
    results: &StudyResults,
    dir: &Path,
    out: &Path,
    formats: FigureFormats,
) -> Result<StudyFiles> {
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
    for (name, bytes) in figure_files(&figures, formats)? {
        put(&name, &bytes)?;
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

/// The figure files `(file name, bytes)` in `formats`, converted in parallel. Without a
/// font for PDF and PNG, the default formats fall back to SVG with one warning; formats the
/// user asked for are an error then.
fn figure_files(
    figures: &[(String, crate::report::plot::Figure, String)],
    formats: FigureFormats,
) -> Result<Vec<(String, Vec<u8>)>> {
    use rayon::prelude::*;
    let mut formats = formats;
    if (formats.pdf || formats.png) && !formats.explicit && !crate::report::convert::available() {
        crate::progress::warn(&format!(
            "figures written as SVG only: no font for their text is installed for the PDF and PNG twins (looked for {}; Debian: apt-get install fonts-dejavu-core)",
            crate::report::convert::SANS_FAMILIES.join(", ")
        ));
        formats.pdf = false;
        formats.png = false;
    }
    type Files = Vec<(String, Vec<u8>)>;
    let per_figure: Vec<Result<Files>> = figures
        .par_iter()
        .map(|(name, fig, _)| {
            let Ok(svg) = fig.to_svg() else {
                return Ok(Vec::new());
            };
            let mut files = Vec::new();
            if formats.pdf || formats.png {
                let scale = formats.png.then_some(PNG_SCALE);
                let (pdf, png) = crate::report::convert::twins(&svg, formats.pdf, scale)?;
                files.extend(pdf.map(|b| (format!("{name}.pdf"), b)));
                files.extend(png.map(|b| (format!("{name}.png"), b)));
            }
            if formats.svg {
                files.push((format!("{name}.svg"), svg.into_bytes()));
            }
            Ok(files)
        })
        .collect();
    let mut out = Vec::new();
    for f in per_figure {
        out.extend(f?);
    }
    Ok(out)
}
