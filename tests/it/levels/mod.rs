//! Level statistics on random-matrix spectra and on spin chains.
//!
//! This file only declares test modules and checks no values (common practice, no source);
//! each check names its source beside it in the module that makes it.

mod chain;
mod ensemble;
mod statistics;
