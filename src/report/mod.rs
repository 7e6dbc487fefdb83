//! Output: JSON, tables (CSV, Markdown, LaTeX), SVG figures and the HTML report.

pub mod html;
pub mod json;
pub mod plot;
pub mod table;
