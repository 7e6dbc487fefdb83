//! Human-readable text of every command's results, one file per command: plain
//! `String`s, printed by the command-line layer.

pub mod elements;
pub mod entanglement;
pub mod gauge;
pub mod inspect;
pub mod levels;
pub mod quench;
pub mod scaling;

pub use elements::{diagonal_text, offdiagonal_text};
pub use entanglement::entanglement_text;
pub use gauge::gauge_text;
pub use inspect::inspect_text;
pub use levels::{ensembles_text, levels_text};
pub use quench::quench_text;
pub use scaling::{scaling_text, verdicts_text};
