//! The report layer: tables, figures, the HTML page.
//!
//! This file only declares test modules and checks no values (common practice, no source);
//! each check names its source beside it in the module that makes it.

mod figure_formats;
mod figures_layout;
mod html;
mod outputs;
mod plot;
mod schema;
mod study_tables;
mod table;
