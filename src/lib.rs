//! eigentherm: level statistics and eigenstate-thermalization (ETH) analyses of
//! exact-diagonalization eigenbases stored in HDF5 files.
//!
//! The stages, one module each, exchange plain data ([`data`]):
//!
//! - [`input`]: discovers sectors in HDF5 files, reads spectra, eigenvector
//!   blocks (hyperslabs), operators and states, and validates them;
//! - [`model`]: reference eigenbases of models of known character (spin chains,
//!   random matrices) and the writer of our file layout;
//! - [`project`]: matrix elements `A_nm = ⟨n|A|m⟩` in a window of eigenstates,
//!   streamed in column blocks under a memory budget;
//! - [`analysis`]: level statistics, diagonal and off-diagonal ETH figures,
//!   thermodynamic predictions, quench dynamics, finite-size scaling;
//! - [`report`]: JSON, tables, SVG figures and the HTML report;
//! - [`pipeline`]: the only stage that calls both input and analysis: per-sector
//!   pipeline, quench over sectors, study;
//! - [`cli`]: the command-line definitions, flags resolved into the option structs above.
//!
//! Results are numerical evidence about finite systems, not proofs.

pub mod analysis;
pub mod cli;
pub mod data;
pub mod error;
pub mod input;
pub mod linalg;
pub mod memory;
pub mod model;
pub mod pipeline;
pub mod progress;
pub mod project;
pub mod provenance;
pub mod report;
pub mod supervisor;
pub mod window;

pub use error::{Error, Result};
