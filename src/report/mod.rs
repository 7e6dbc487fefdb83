//! Output: JSON, tables (CSV, Markdown, LaTeX), SVG figures and the HTML report.
//!
//! - [`convert`]: SVG figures as PDF and PNG;
//! - [`json`]: atomic file writes;
//! - [`table`]: tables with concise `value(uncertainty)` numbers;
//! - [`plot`]: generic SVG figures (plotters);
//! - [`html`]: the self-contained `report.html`;
//! - [`text`]: the human-readable text of every command;
//! - [`study`]: the study's figures, tables, page and output folder.

pub mod convert;
pub mod html;
pub mod json;
pub mod plot;
pub mod study;
pub mod table;
pub mod text;
