//! The self-contained HTML report.
//!
//! One file, `report.html`, with inline CSS and inline SVG figures: no script, no font,
//! no network access, so it opens the same on a laptop, a cluster front end or in ten
//! years. Its order is fixed:
//!
//! 1. title;
//! 2. a summary of verdicts, first, each with its reasons and the finite-size caveat
//!    (see [`crate::analysis::scaling::decide`]), followed by the verdict rule;
//! 3. the provenance block (tool version, command line, parameters, SHA-256 of each input);
//! 4. the evidence sections, each a sequence of paragraphs, tables and figures.
//!
//! A figure that could not be drawn is shown as a visible `figure-missing` box with the
//! reason, never silently dropped (the check script `scripts/check_report_html` fails on
//! it). Text is HTML-escaped; SVG produced by [`crate::report::plot`] is embedded as is.

use crate::analysis::scaling::{Verdict, VerdictReport};
use crate::error::Result;
use crate::provenance::Provenance;
use crate::report::plot::Figure;
use crate::report::table::{escape_html, Table};
use serde::Serialize;
use std::fmt::Write as _;

/// The verdict for one subject (e.g. `chain_L14.h5 / even / sz_middle`).
#[derive(Debug, Clone, Serialize)]
pub struct Summary {
    /// What the verdict is about.
    pub subject: String,
    /// The verdict.
    pub verdict: Verdict,
    /// One line per criterion.
    pub reasons: Vec<String>,
    /// The finite-size caveat.
    pub caveat: String,
}

impl Summary {
    /// Summary line of a verdict report.
    pub fn from_report(subject: impl Into<String>, report: &VerdictReport) -> Self {
        Self {
            subject: subject.into(),
            verdict: report.verdict,
            reasons: report.reasons.clone(),
            caveat: report.caveat.clone(),
        }
    }
}

/// A piece of an evidence section.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Block {
    /// A paragraph of plain text.
    Text(String),
    /// Preformatted text (e.g. a command to rerun).
    Pre(String),
    /// A table.
    Table(Table),
    /// An SVG figure (a complete `<svg>` element) with its caption.
    Figure {
        /// The SVG markup.
        svg: String,
        /// Caption.
        caption: String,
    },
    /// A figure that could not be drawn, with the reason (shown, and flagged by the check
    /// script).
    MissingFigure {
        /// Caption of the intended figure.
        caption: String,
        /// Why it is missing.
        reason: String,
    },
}

/// An evidence section.
#[derive(Debug, Clone, Serialize)]
pub struct Section {
    /// Heading.
    pub title: String,
    /// Content, in order.
    pub blocks: Vec<Block>,
}

impl Section {
    /// An empty section.
    pub fn new(title: impl Into<String>) -> Self {
        Self {
            title: title.into(),
            blocks: Vec::new(),
        }
    }

    /// Appends a paragraph.
    pub fn text(mut self, text: impl Into<String>) -> Self {
        self.blocks.push(Block::Text(text.into()));
        self
    }

    /// Appends a table.
    pub fn table(mut self, table: Table) -> Self {
        self.blocks.push(Block::Table(table));
        self
    }

    /// Renders and appends a figure; if rendering fails, appends a visible
    /// [`Block::MissingFigure`] with the error instead.
    pub fn figure(mut self, figure: &Figure, caption: impl Into<String>) -> Self {
        let caption = caption.into();
        self.blocks.push(match figure.to_svg() {
            Ok(svg) => Block::Figure { svg, caption },
            Err(e) => Block::MissingFigure {
                caption,
                reason: e.to_string(),
            },
        });
        self
    }

    /// Appends an already rendered SVG figure.
    pub fn svg(mut self, svg: String, caption: impl Into<String>) -> Self {
        self.blocks.push(Block::Figure {
            svg,
            caption: caption.into(),
        });
        self
    }
}

/// The whole report.
#[derive(Debug, Clone, Serialize)]
pub struct Page {
    /// Title (also the HTML `<title>`).
    pub title: String,
    /// Verdicts, shown first.
    pub summary: Vec<Summary>,
    /// The verdict rule in words (shown after the summary when present).
    pub rule: Option<String>,
    /// Provenance block.
    pub provenance: Provenance,
    /// Evidence sections.
    pub sections: Vec<Section>,
}

const CSS: &str = "\
body{font-family:sans-serif;max-width:1100px;margin:1.5em auto;padding:0 1em;color:#222;line-height:1.4}\
h1{font-size:1.6em;margin-bottom:.2em}h2{border-bottom:1px solid #ccc;padding-bottom:.2em;margin-top:1.6em}\
table{border-collapse:collapse;margin:.8em 0;font-size:.95em;display:block;overflow-x:auto;max-width:100%}\
caption{text-align:left;font-weight:bold;padding-bottom:.3em}\
th,td{padding:.25em .7em;border-bottom:1px solid #ddd;text-align:left}\
th{border-bottom:2px solid #888}td.num,th.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}\
figure{display:inline-block;margin:.6em 1em .6em 0;vertical-align:top;max-width:100%}\
figure svg{max-width:100%;height:auto;border:1px solid #eee}\
figcaption{font-size:.9em;color:#444;max-width:480px}\
.verdict{display:inline-block;padding:.1em .6em;border-radius:.3em;font-weight:bold;color:#fff}\
.verdict.thermalizes{background:#1b7837}.verdict.does_not_thermalize{background:#b2182b}\
.verdict.inconclusive{background:#8c6d00}\
.summary li{margin-bottom:.6em}.reasons{font-size:.9em;color:#333;margin:.2em 0}\
.caveat{font-size:.9em;color:#555;font-style:italic}\
.rule{font-size:.85em;color:#444;background:#f6f6f6;padding:.6em;border-left:3px solid #bbb}\
.figure-missing{border:2px dashed #b2182b;color:#b2182b;padding:1em;margin:.6em 0}\
pre{background:#f6f6f6;padding:.6em;overflow-x:auto}\
code{font-size:.9em;word-break:break-all}nav ol{columns:2}";

fn verdict_class(v: Verdict) -> &'static str {
    match v {
        Verdict::Thermalizes => "thermalizes",
        Verdict::DoesNotThermalize => "does_not_thermalize",
        Verdict::Inconclusive => "inconclusive",
        Verdict::SymmetriesUnresolved => "inconclusive",
    }
}

/// Drops anything before the `<svg` tag (an XML declaration or doctype would be invalid
/// inside HTML).
fn inline_svg(svg: &str) -> &str {
    svg.find("<svg").map_or("", |i| &svg[i..])
}

impl Page {
    /// A report with a title and provenance, no content yet.
    pub fn new(title: impl Into<String>, provenance: Provenance) -> Self {
        Self {
            title: title.into(),
            summary: Vec::new(),
            rule: None,
            provenance,
            sections: Vec::new(),
        }
    }

    /// Renders the complete HTML document.
    pub fn to_html(&self) -> String {
        let mut h = String::with_capacity(64 * 1024);
        let t = escape_html(&self.title);
        let _ = write!(
            h,
            "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
             <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
             <meta name=\"generator\" content=\"{}\">\n<title>{t}</title>\n<style>{CSS}</style>\n\
             </head>\n<body>\n<h1>{t}</h1>\n",
            escape_html(&self.provenance.tool)
        );

        // Contents.
        h.push_str("<nav><ol>\n<li><a href=\"#summary\">Summary of verdicts</a></li>\n<li><a href=\"#provenance\">Provenance</a></li>\n");
        for (i, s) in self.sections.iter().enumerate() {
            let _ = writeln!(
                h,
                "<li><a href=\"#section-{}\">{}</a></li>",
                i + 1,
                escape_html(&s.title)
            );
        }
        h.push_str("</ol></nav>\n");

        // Summary first.
        h.push_str("<section id=\"summary\" class=\"summary\">\n<h2>Summary of verdicts</h2>\n");
        if self.summary.is_empty() {
            h.push_str(
                "<p>No verdict was reached (no observable was analyzed across sizes).</p>\n",
            );
        } else {
            h.push_str("<ul>\n");
            for s in &self.summary {
                let _ = write!(
                    h,
                    "<li><span class=\"verdict {}\">{}</span> {}\n<ul class=\"reasons\">\n",
                    verdict_class(s.verdict),
                    escape_html(&s.verdict.to_string()),
                    escape_html(&s.subject)
                );
                for r in &s.reasons {
                    let _ = writeln!(h, "<li>{}</li>", escape_html(r));
                }
                let _ = writeln!(
                    h,
                    "</ul>\n<div class=\"caveat\">{}</div></li>",
                    escape_html(&s.caveat)
                );
            }
            h.push_str("</ul>\n");
        }
        if let Some(rule) = &self.rule {
            let _ = writeln!(h, "<p class=\"rule\">{}</p>", escape_html(rule));
        }
        h.push_str("</section>\n");

        // Provenance.
        let p = &self.provenance;
        h.push_str("<section id=\"provenance\">\n<h2>Provenance</h2>\n<table>\n<tbody>\n");
        let _ = writeln!(
            h,
            "<tr><th>tool</th><td>{}</td></tr>\n<tr><th>command line</th><td><code>{}</code></td></tr>",
            escape_html(&p.tool),
            escape_html(&p.command_line)
        );
        for (k, v) in &p.parameters {
            let _ = writeln!(
                h,
                "<tr><th>{}</th><td><code>{}</code></td></tr>",
                escape_html(k),
                escape_html(v)
            );
        }
        h.push_str("</tbody>\n</table>\n");
        if !p.inputs.is_empty() {
            h.push_str("<table>\n<caption>Input files</caption>\n<thead><tr><th>file</th><th class=\"num\">size</th><th>SHA-256</th></tr></thead>\n<tbody>\n");
            for f in &p.inputs {
                let _ = writeln!(
                    h,
                    "<tr><td><code>{}</code></td><td class=\"num\">{}</td><td><code>{}</code></td></tr>",
                    escape_html(&f.path),
                    crate::memory::human_bytes(f.bytes as f64),
                    escape_html(&f.sha256)
                );
            }
            h.push_str("</tbody>\n</table>\n");
        }
        h.push_str("</section>\n");

        // Evidence.
        for (i, s) in self.sections.iter().enumerate() {
            let _ = writeln!(
                h,
                "<section id=\"section-{}\">\n<h2>{}</h2>",
                i + 1,
                escape_html(&s.title)
            );
            for b in &s.blocks {
                match b {
                    Block::Text(t) => {
                        let _ = writeln!(h, "<p>{}</p>", escape_html(t));
                    }
                    Block::Pre(t) => {
                        let _ = writeln!(h, "<pre>{}</pre>", escape_html(t));
                    }
                    Block::Table(t) => h.push_str(&t.to_html()),
                    Block::Figure { svg, caption } => {
                        let svg = inline_svg(svg);
                        if svg.is_empty() {
                            let _ = writeln!(
                                h,
                                "<div class=\"figure-missing\">figure missing: {}: empty SVG</div>",
                                escape_html(caption)
                            );
                        } else {
                            let _ = writeln!(
                                h,
                                "<figure>\n{svg}\n<figcaption>{}</figcaption>\n</figure>",
                                escape_html(caption)
                            );
                        }
                    }
                    Block::MissingFigure { caption, reason } => {
                        let _ = writeln!(
                            h,
                            "<div class=\"figure-missing\">figure missing: {}: {}</div>",
                            escape_html(caption),
                            escape_html(reason)
                        );
                    }
                }
            }
            h.push_str("</section>\n");
        }
        h.push_str("</body>\n</html>\n");
        h
    }

    /// Writes the report to `path` atomically (temporary file in the same folder, then
    /// rename; [`crate::report::json::write_atomic`]).
    pub fn write(&self, path: impl AsRef<std::path::Path>) -> Result<()> {
        crate::report::json::write_atomic(path.as_ref(), self.to_html().as_bytes())
    }
}
