//! The documents of a quench over the sectors of one file: the result of each sector with
//! weight and the whole-file combination (see [`super::combine`] and [`super::overall`]).

use super::{state::StateSpec, Combined, Overall, QuenchOptions, QuenchReport, TimeGrid};
use serde::Serialize;

/// One sector's result.
#[derive(Debug, Clone, Serialize)]
pub struct SectorResult {
    /// Sector name.
    pub name: String,
    /// Sector name, the key every command uses (`name` holds the same, kept for the
    /// contract's `levels`/`diagonal` keys).
    pub sector: String,
    /// Weight of the state in the sector, `‖c_s‖²` (before normalisation).
    pub weight: f64,
    /// Fraction of that weight on the stored eigenstates (< 1 for a partial eigenbasis).
    pub captured: f64,
    /// The analysis of the normalised sector component.
    pub report: QuenchReport,
}

/// The result for one file.
#[derive(Debug, Clone, Serialize)]
pub struct FileResult {
    /// The file.
    pub file: String,
    /// The observable.
    pub observable: String,
    /// The state SPEC as given.
    pub state: String,
    /// The parsed state.
    pub state_spec: StateSpec,
    /// The time grid.
    pub times: TimeGrid,
    /// The options used.
    pub options: QuenchOptions,
    /// Per-sector results.
    pub sectors: Vec<SectorResult>,
    /// Sectors where the state has no weight (skipped).
    pub sectors_without_weight: Vec<String>,
    /// Weighted combination over the sectors (when more than one has weight).
    pub combined: Option<Combined>,
    /// Number of sites (attribute `size` of the first sector with weight that has one).
    pub size: Option<usize>,
    /// Model family (attribute `model` of the first sector with weight that has one).
    pub model: Option<String>,
    /// Sum of the dimensions of the sectors with weight.
    pub dimension: usize,
    /// Whole-state figures (see [`Overall`]).
    pub overall: Overall,
}
