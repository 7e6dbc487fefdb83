//! Diagonal and off-diagonal ETH figures: the library on models of known character and the commands on a file.

mod commands;
mod elements;
