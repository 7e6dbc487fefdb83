//! `eigentherm gauge`: the adiabatic-gauge-potential norm and fidelity susceptibility of
//! every window state for each perturbation, through the per-sector loop of
//! [`super::elements::each_sector`].
//!
//! The partner states (every stored state, or the window) are streamed in block pairs under
//! the budget ([`crate::project::for_each_block`]); every perturbation shares one pass and
//! has one [`GaugeAccumulator`], which keeps two numbers per window state (no `W × W` or
//! `W × n` matrix is kept).

use super::elements::{each_sector, ElementsRequest};
use crate::analysis::gauge::{GaugeAccumulator, GaugeOptions, GaugeResult};
use crate::analysis::sector::ElementsOutput;
use crate::error::{Context, Result};
use std::time::Instant;

/// `eigentherm gauge`: `χₙ(μ)` and `Fₙ` of the window states for every requested
/// perturbation (`req.observables`), one pass over the partner states per sector.
pub fn gauge(req: &ElementsRequest, opts: &GaugeOptions) -> Result<ElementsOutput<GaugeResult>> {
    each_sector(req, |w| {
        let (path, group) = (w.file.path().to_path_buf(), w.group().to_string());
        let dim = w.sector.dim.unwrap_or(w.spectrum.len());
        let mut accs = w
            .ops
            .iter()
            .map(|(name, _)| {
                GaugeAccumulator::new(
                    name,
                    &w.spectrum.energies,
                    w.range.clone(),
                    &w.label,
                    opts,
                    w.sector.size,
                    dim,
                )
            })
            .collect::<Result<Vec<_>>>()
            .at(&path, &group)?;
        let partners = match accs.first() {
            Some(a) => a.partner_range(),
            None => return Ok(Vec::new()),
        };
        w.block_pass(partners, &req.budget, |k, blk, m| accs[k].add_block(blk, m))?;
        let t_an = Instant::now();
        let out = accs
            .into_iter()
            .map(GaugeAccumulator::finish)
            .collect::<Result<Vec<_>>>()
            .at(&path, &group)?;
        w.timing.analyze_seconds += t_an.elapsed().as_secs_f64();
        Ok(out)
    })
}
