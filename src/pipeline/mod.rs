//! The pipeline: the only stage that calls both [`crate::input`] and [`crate::analysis`].
//!
//! ```text
//!  files ──► input (sectors, spectra, vector readers, operators)
//!              │
//!              ▼
//!          project (matrix elements under the memory budget, one stream)
//!              │
//!              ▼
//!          analysis (plain data in, serde results out) ──► results to the caller
//! ```
//!
//! Each function takes the library's option structs (never command-line types), opens its
//! inputs read-only, runs the passes over the eigenvectors and the analyses, and returns
//! the results; none prints or writes files (the command-line layer hands the results to
//! [`crate::report`]). One file per job: [`levels`], [`elements`] (`diagonal` and
//! `offdiagonal`, one per-sector loop; [`gauge`] uses the same loop; [`entanglement`]),
//! [`sector`] (the whole per-sector pipeline of `scaling` and `study`), [`scaling`], [`quench`]
//! (a state split over the sectors of one file), [`study`], [`inspect`] and [`demo`];
//! [`matrix`] gives one observable's window matrix to library callers; [`thermal`] resolves a
//! sector's thermal source (`--thermo`: the stored states, the kernel polynomial method, a
//! stored spectrum). [`flags`] resolves options spelled as on the command line into these
//! requests, for the command line and the Python module alike.

pub mod class;
pub mod demo;
pub mod elements;
pub mod entanglement;
pub mod flags;
pub mod gauge;
pub mod inspect;
pub mod levels;
pub mod matrix;
pub mod operators;
pub mod quench;
pub mod scaling;
pub mod sector;
pub mod study;
pub mod thermal;

pub use crate::input::{Layout, LayoutSource, Overrides};

use crate::error::Result;
use crate::input::EigenFile;
use std::path::PathBuf;

/// Input files and the dataset path overrides that apply to all of them.
#[derive(Debug, Clone, Default)]
pub struct Inputs {
    /// HDF5 files holding eigenbases.
    pub files: Vec<PathBuf>,
    /// Dataset path overrides.
    pub overrides: Overrides,
}

impl Inputs {
    /// The files with the default layout.
    pub fn files(files: Vec<PathBuf>) -> Self {
        Inputs {
            files,
            overrides: Overrides::default(),
        }
    }

    /// Opens every input file (read-only); the first bad file ends with its error.
    pub fn open(&self) -> Result<Vec<EigenFile>> {
        self.files
            .iter()
            .map(|f| EigenFile::open(f, &self.overrides))
            .collect()
    }
}
