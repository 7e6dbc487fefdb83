//! `eigentherm inspect`: the summary of every input file ([`crate::input::inspect`]) and,
//! with verification, the first failed check as an error after the summaries.

use super::Inputs;
use crate::error::{Error, Result};
use crate::input::inspect::inspect;
pub use crate::input::inspect::{FileSummary, SectorSummary, Verification};

/// The summaries of the files (`sector`: only this one; `verify`: check the eigenbases).
pub fn inspect_files(
    inputs: &Inputs,
    sector: Option<&str>,
    verify: bool,
) -> Result<Vec<FileSummary>> {
    inputs
        .open()?
        .iter()
        .map(|file| inspect(file, sector, verify))
        .collect()
}

/// The first failed verification among the summaries, as an error naming the dataset.
pub fn first_failure(reports: &[FileSummary]) -> Option<Error> {
    for r in reports {
        for s in &r.sectors {
            let Some(v) = &s.verify else { continue };
            let dataset = s.sector.eigenvectors_path.clone().unwrap_or_default();
            if let Some(c) = v.orthonormality.as_ref().filter(|c| !c.pass) {
                return Some(Error::dataset(&r.file, dataset, c.problem()));
            }
            if let Some(c) = v.residual.as_ref().filter(|c| !c.pass) {
                return Some(Error::dataset(
                    &r.file,
                    dataset,
                    format!(
                        "residual ||H v - E v|| = {:.3e} (state {}) exceeds {:.3e}",
                        c.max_residual, c.worst_state, c.threshold
                    ),
                ));
            }
        }
    }
    None
}
