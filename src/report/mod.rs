//! Output: JSON, tables (CSV, Markdown, LaTeX), SVG figures and the HTML report.
//!
//! - [`json`]: JSON on stdout and atomic file writes;
//! - [`table`]: tables with concise `value(uncertainty)` numbers;
//! - [`plot`]: generic SVG figures (plotters);
//! - [`provenance`]: tool version, command line, parameters, SHA-256 of inputs;
//! - [`html`]: the self-contained `report.html`.

pub mod html;
pub mod json;
pub mod plot;
pub mod provenance;
pub mod table;
