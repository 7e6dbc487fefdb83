//! The demo's invented scenario, built on the spot and checked before the study.
//!
//! **The scenario is made up.** A small (fictional) research team plans a long
//! cluster campaign on a spin-1/2 chain in a tilted magnetic field — the mixed-field
//! Ising chain `H = Σ σᶻᵢσᶻᵢ₊₁ + g Σ σˣᵢ + h Σ σᶻᵢ` with g = 0.9045, h = 0.8090 —
//! and, before spending the allocation, checks on small open chains (reflection sectors
//! resolved) that every sector is chaotic and that the local magnetizations thermalize.
//! As a contrast they run the same checks on the transverse-field chain (h = 0), which is
//! integrable.

use super::inspect::inspect_files;
use super::Inputs;
use crate::error::{Error, Result};
use crate::model::{build_chain, write_file, Boundary, ChainModel, ChainSpec, Reflection};
use std::path::{Path, PathBuf};
use std::time::Instant;

/// The demo's chain models: (file stem, model).
pub fn scenario_models() -> Vec<(&'static str, ChainModel)> {
    vec![
        (
            "tilted",
            ChainModel::MixedFieldIsing {
                j: 1.0,
                g: 0.9045,
                h: 0.8090,
            },
        ),
        (
            "transverse",
            ChainModel::TransverseFieldIsing { j: 1.0, g: 0.9045 },
        ),
    ]
}

/// Observables analyzed by the demo (written by the chain builder).
pub const DEMO_OBSERVABLES: [&str; 2] = ["sz_site", "sx_site"];

/// The demo's quench: every spin along +y, a product state with energy E = 0 for both chains
/// (⟨σᶻσᶻ⟩ = ⟨σˣ⟩ = ⟨σᶻ⟩ = 0 in it), the middle of the spectrum (Tr H = 0).
pub const DEMO_STATE: &str = "product:y+";

/// Time grid of the demo's quench.
pub const DEMO_TIMES: &str = "lin:0:40:401";

/// Builds the demo files of the chain lengths `sizes` in `out`; returns their paths. Each
/// file's sectors and build time go to `log`.
pub fn build_files(
    out: &Path,
    sizes: &[usize],
    mut log: impl FnMut(String),
) -> Result<Vec<PathBuf>> {
    std::fs::create_dir_all(out).map_err(|e| Error::io(out, e))?;
    let mut files = Vec::new();
    for (stem, model) in scenario_models() {
        for &l in sizes {
            let t = Instant::now();
            let spec = ChainSpec {
                model,
                sites: l,
                boundary: Boundary::Open,
                reflection: Reflection::Resolve,
                site: None,
                sz: None,
                disorder: None,
            };
            let sectors = build_chain(&spec)?;
            let path = out.join(format!("{stem}_L{l:02}.h5"));
            write_file(&path, &sectors)?;
            let dims: Vec<String> = sectors
                .iter()
                .map(|s| format!("{} {}", s.group, s.energies.len()))
                .collect();
            log(format!(
                "  built {} ({}) in {:.1} s",
                path.display(),
                dims.join(", "),
                t.elapsed().as_secs_f64()
            ));
            files.push(path);
        }
    }
    Ok(files)
}

/// Verifies every file (orthonormality and residuals on a sample of states); returns the
/// number of sectors verified per file, or the first failed check.
pub fn verify_files(files: &[PathBuf]) -> Result<Vec<usize>> {
    let reports = inspect_files(&Inputs::files(files.to_vec()), None, true)?;
    if let Some(e) = super::inspect::first_failure(&reports) {
        return Err(e);
    }
    Ok(reports.iter().map(|r| r.sectors.len()).collect())
}
