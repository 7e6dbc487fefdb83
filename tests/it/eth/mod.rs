//! Diagonal and off-diagonal ETH figures: the library on models of known character, the commands on a file, and checks against independent computations.

mod commands;
mod elements;
mod references;
