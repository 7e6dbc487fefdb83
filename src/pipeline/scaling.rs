//! `eigentherm scaling`: the per-sector pipeline ([`super::sector`]) on every selected file
//! and sector, then the scaling table, fits and verdicts
//! ([`crate::analysis::scaling::build`]).

use super::sector::{analyze_sector, SectorSettings};
use super::Inputs;
use crate::analysis::scaling::{self, ScalingReport};
use crate::analysis::sector::SectorAnalysis;
use crate::error::Result;

/// What to analyze across sizes.
#[derive(Debug, Clone)]
pub struct ScalingRequest {
    /// Input files.
    pub inputs: Inputs,
    /// Only this sector (default: every sector).
    pub sector: Option<String>,
    /// Observables (at least one).
    pub observables: Vec<String>,
    /// Windows, off-diagonal options and budget.
    pub settings: SectorSettings,
    /// Merge the sectors of one size into one row.
    pub combine_sectors: bool,
}

/// Runs the per-sector pipeline on every selected file and sector.
pub fn analyze_all(req: &ScalingRequest) -> Result<Vec<SectorAnalysis>> {
    let files = req.inputs.open()?;
    let mut out = Vec::new();
    let pb = crate::progress::bar(
        files.iter().map(|f| f.sectors().len() as u64).sum(),
        "sectors",
    );
    for f in &files {
        for s in f.select(req.sector.as_deref())? {
            crate::progress::check_interrupt()?;
            pb.set_message(format!("{} [{}]", f.path().display(), s.name));
            out.push(analyze_sector(f, s, &req.observables, &req.settings)?);
            pb.inc(1);
        }
    }
    pb.finish_and_clear();
    Ok(out)
}

/// The per-sector analyses and the scaling table built from them.
pub fn scaling(req: &ScalingRequest) -> Result<(Vec<SectorAnalysis>, ScalingReport)> {
    let analyses = analyze_all(req)?;
    let report = scaling::build(&analyses, req.combine_sectors)?;
    Ok((analyses, report))
}
