//! `eigentherm levels`: the ascending spectrum of every selected sector of every file, and
//! its level statistics ([`crate::analysis::levels::analyze`]).

use super::Inputs;
use crate::analysis::levels::{self, LevelOptions, LevelsOutput, SectorLevels};
use crate::error::{Context, Result};
use crate::window::WindowSpec;

/// The level statistics of every selected sector (`sector`: only this one) in the window.
pub fn levels(
    inputs: &Inputs,
    sector: Option<&str>,
    window: &WindowSpec,
    opts: &LevelOptions,
) -> Result<LevelsOutput> {
    let mut sectors = Vec::new();
    for file in inputs.open()? {
        for s in file.select(sector)? {
            let spectrum = file.spectrum(s)?;
            let dataset = format!("{}/energies", s.group.trim_end_matches('/'));
            let report =
                levels::analyze(&spectrum.energies, window, opts).at(file.path(), dataset)?;
            sectors.push(SectorLevels {
                file: file.path().display().to_string(),
                name: s.name.clone(),
                report,
            });
        }
    }
    Ok(LevelsOutput {
        options: opts.clone(),
        sectors,
    })
}
