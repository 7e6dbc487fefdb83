//! Level statistics on random-matrix spectra and on spin chains.

mod chain;
mod ensemble;
mod statistics;
