//! The report layer: tables, figures, the HTML page.

mod html;
mod plot;
mod table;
