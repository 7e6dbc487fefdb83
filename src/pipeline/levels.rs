//! `eigentherm levels`: the ascending spectrum of every selected sector of every file, and
//! its level statistics ([`crate::analysis::levels::analyze`]).

use super::class::{sector_class, ClassChoice};
use super::Inputs;
use crate::analysis::ensemble;
use crate::analysis::levels::{self, LevelOptions, LevelsOutput, SectorLevels};
use crate::error::{Context, Result};
use crate::window::WindowSpec;

/// What `levels` analyzes (built from the flags by [`super::flags::LevelsFlags`]).
#[derive(Debug, Clone)]
pub struct LevelsRequest {
    /// Input files.
    pub inputs: Inputs,
    /// Only this sector (default: every sector).
    pub sector: Option<String>,
    /// The window.
    pub window: WindowSpec,
    /// Analysis options.
    pub opts: LevelOptions,
    /// How the symmetry class is chosen.
    pub class: ClassChoice,
}

impl LevelsRequest {
    /// Runs [`levels`].
    pub fn run(&self) -> Result<LevelsOutput> {
        levels(
            &self.inputs,
            self.sector.as_deref(),
            &self.window,
            &self.opts,
            self.class,
        )
    }
}

/// The level statistics of every selected sector (`sector`: only this one) in the window,
/// with the symmetry class of each ([`super::class`]), and the realization averages and
/// disorder scan of the sectors that carry a `realization` attribute
/// ([`crate::analysis::ensemble`]).
pub fn levels(
    inputs: &Inputs,
    sector: Option<&str>,
    window: &WindowSpec,
    opts: &LevelOptions,
    class: ClassChoice,
) -> Result<LevelsOutput> {
    let mut sectors = Vec::new();
    let mut members = Vec::new();
    for file in inputs.open()? {
        for s in file.select(sector)? {
            crate::progress::check_interrupt()?;
            let spectrum = file.spectrum(s)?;
            let dataset = format!("{}/energies", s.group.trim_end_matches('/'));
            let report =
                levels::analyze(&spectrum.energies, window, opts).at(file.path(), dataset)?;
            // the class's phase test reads a few eigenvectors of a complex sector; a sector
            // whose eigenvectors do not fit the budget is classed without them
            let complex = s.field == Some(crate::data::Field::Complex);
            let vectors = match s.dim {
                Some(_) if complex => file.vectors(s, &spectrum).ok(),
                _ => None,
            };
            let src = vectors
                .as_ref()
                .map(|v| v as &dyn crate::data::ColumnSource);
            let class = sector_class(&file, s, src, &[], class)?;
            let mut report = report;
            report.judge_thouless(class.symmetry_class, opts.sff_tolerance);
            if let Some(k) = s.realization {
                members.push(ensemble::Member {
                    name: format!("{}:{}", file.path().display(), s.name),
                    size: s.size,
                    disorder: s.disorder,
                    label: s.label.clone().unwrap_or_default(),
                    realization: k,
                    value: report.mean_r,
                    unfolded: std::mem::take(&mut report.unfolded),
                    mean_spacing: report.mean_spacing,
                    class: class.symmetry_class,
                });
            }
            sectors.push(SectorLevels {
                file: file.path().display().to_string(),
                sector: s.name.clone(),
                name: s.name.clone(),
                class,
                realization: s.realization,
                disorder: s.disorder,
                report,
            });
        }
    }
    let ensembles = ensemble::ensembles(&members, opts);
    let disorder_scan = ensemble::disorder_scan(&ensembles);
    Ok(LevelsOutput {
        options: opts.clone(),
        sectors,
        ensembles,
        disorder_scan,
    })
}
