//! Diagonal and off-diagonal ETH figures: the library on models of known character, the commands on a file, and checks against independent computations.
//!
//! This file only declares test modules and checks no values (common practice, no source);
//! each check names its source beside it in the module that makes it.

mod commands;
mod elements;
mod kpm;
mod references;
