//! `eigentherm entanglement`: the bipartite entanglement entropy of every window state of
//! each sector that stores its `basis` configurations, streamed in column blocks under the
//! budget ([`crate::project::for_each_vector_block`]), parallel over the states of a block.

use super::Inputs;
use crate::analysis::entanglement::{
    summarize, Bipartition, EntanglementOutput, EntanglementSector, StateEntropy,
};
use crate::data::{c64, ColumnSource, Matrix};
use crate::error::{Context, Error, Result};
use crate::project::{self, Budget};
use crate::window::WindowSpec;
use rayon::prelude::*;

/// What to analyze.
#[derive(Debug, Clone)]
pub struct EntanglementRequest {
    /// Input files.
    pub inputs: Inputs,
    /// Only this sector (default: every sector).
    pub sector: Option<String>,
    /// The window.
    pub window: WindowSpec,
    /// Sites of subsystem A (default: half the chain, rounded down).
    pub cut: Option<usize>,
    /// Memory and parallelism of the pass.
    pub budget: Budget,
}

/// `eigentherm entanglement` on every selected file and sector.
pub fn entanglement(req: &EntanglementRequest) -> Result<EntanglementOutput> {
    let files = req.inputs.open()?;
    let mut sectors = Vec::new();
    for f in &files {
        for s in f.select(req.sector.as_deref())? {
            let basis_path = format!("{}/basis", s.group.trim_end_matches('/'));
            let Some(conf) = f.basis(s)? else {
                return Err(Error::dataset(
                    f.path(),
                    basis_path,
                    "not stored: entanglement needs the configuration of each eigenvector row (generate writes it for S^z sectors and full spaces, not for reflection- or flip-symmetrised ones)",
                ));
            };
            let bits = conf
                .iter()
                .map(|&c| usize::BITS - c.leading_zeros())
                .max()
                .unwrap_or(0);
            let sites = s.size.unwrap_or(bits as usize);
            let cut = req.cut.unwrap_or(sites / 2);
            if cut == 0 || cut >= sites {
                return Err(Error::dataset(
                    f.path(),
                    basis_path,
                    format!(
                        "--cut {cut} out of range: the chain has {sites} sites (1 <= cut <= {})",
                        sites.saturating_sub(1)
                    ),
                ));
            }
            let spectrum = f.spectrum(s)?;
            let src = f.vectors(s, &spectrum)?;
            crate::input::validate::require_orthonormal(f, s, &src)?;
            let range = req.window.indices(&spectrum.energies);
            let part = Bipartition::new(&conf, cut);
            let mut per_state = Vec::with_capacity(range.len());
            let mut st = project::StageTiming::default();
            project::for_each_vector_block(&src, range, &req.budget, &mut st, |first, m| {
                let cols = m.ncols();
                let ent: Vec<(f64, f64)> = (0..cols)
                    .into_par_iter()
                    .map(|j| match m {
                        Matrix::Real(a) => part.entropies(|r| c64::new(a[(r, j)], 0.0)),
                        Matrix::Complex(a) => part.entropies(|r| a[(r, j)]),
                    })
                    .collect();
                for (j, (s_vn, s_2)) in ent.into_iter().enumerate() {
                    let index = first + j;
                    per_state.push(StateEntropy {
                        index,
                        energy: spectrum.energies[index],
                        s_vn,
                        s_2,
                    });
                }
                Ok(())
            })
            .at(f.path(), &s.group)?;
            let result = summarize(
                &req.window.label(),
                per_state,
                sites,
                &part,
                part.up.is_none(),
            );
            sectors.push(EntanglementSector {
                file: f.path().display().to_string(),
                sector: s.name.clone(),
                name: s.name.clone(),
                dim: src.dim(),
                n_states: spectrum.len(),
                result,
            });
        }
    }
    Ok(EntanglementOutput {
        memory_budget: req.budget.bytes,
        sectors,
    })
}
