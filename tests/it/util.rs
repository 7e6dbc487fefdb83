//! File writers shared by the modules of the suite.

use eigentherm::model::{build_chain, write_file, Boundary, ChainModel, ChainSpec, Reflection};
use std::path::{Path, PathBuf};

/// The open mixed-field Ising chain of `sites` sites with J = 1, g = 0.9045, h = 0.8090,
/// reflection sectors resolved (the demo's chaotic chain).
pub fn mixed_field_spec(sites: usize) -> ChainSpec {
    ChainSpec {
        model: ChainModel::MixedFieldIsing {
            j: 1.0,
            g: 0.9045,
            h: 0.8090,
        },
        sites,
        boundary: Boundary::Open,
        reflection: Reflection::Resolve,
        site: None,
    }
}

/// Writes the chains of [`mixed_field_spec`] of lengths `sizes` into `dir` as `mfi{L}.h5`.
pub fn mixed_field_chains(dir: &Path, sizes: &[usize]) -> Vec<PathBuf> {
    sizes
        .iter()
        .map(|&l| {
            let path = dir.join(format!("mfi{l}.h5"));
            let sectors = build_chain(&mixed_field_spec(l)).unwrap();
            write_file(&path, &sectors).unwrap();
            path
        })
        .collect()
}
