//! Everything a study computes, as one document (`results.json`): the provenance, the
//! per-sector analyses, the scaling table with its fits and verdicts, and the quenches.

use crate::analysis::quench::outcome::FileResult;
use crate::analysis::scaling::ScalingReport;
use crate::analysis::sector::SectorAnalysis;
use crate::provenance::Provenance;
use serde::Serialize;

/// The quench of one initial state and one observable on every file (`results.json` key
/// `quench`).
#[derive(Debug, Clone, Serialize)]
pub struct QuenchStudy {
    /// The observable.
    pub observable: String,
    /// The state SPEC as given.
    pub state: String,
    /// One result per file (sectors combined through their embeddings).
    pub runs: Vec<FileResult>,
}

/// Everything a study computed (`results.json`).
#[derive(Debug, Clone, Serialize)]
pub struct StudyResults {
    /// Provenance of the run.
    pub provenance: Provenance,
    /// Per-sector analyses (levels, diagonal, off-diagonal).
    pub sectors: Vec<SectorAnalysis>,
    /// Scaling rows, fits and verdicts.
    pub scaling: ScalingReport,
    /// Quench dynamics, one entry per (observable, state) (empty without `--state`).
    pub quench: Vec<QuenchStudy>,
}
