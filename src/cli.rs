//! Command-line interface: the subcommands and their dispatch.
//!
//! Each subcommand's options live beside its implementation in [`crate::commands`].

use crate::commands;
use crate::error::Result;
use clap::{Parser, Subcommand};

/// Level statistics and eigenstate-thermalization analyses of stored eigenbases.
#[derive(Debug, Parser)]
#[command(name = "eigentherm", version, about, long_about = None)]
pub struct Cli {
    /// The subcommand.
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
#[allow(clippy::large_enum_variant)] // parsed once; boxing the option structs buys nothing
pub enum Command {
    /// Build the files of an invented demo scenario and run every analysis on them.
    Demo(commands::demo::Args),
    /// Write the eigenbasis of a reference model (spin chain or random matrix) to an HDF5 file.
    Generate(commands::generate::Args),
    /// List the sectors, datasets and attributes of a file; optionally verify the eigenbasis.
    Inspect(commands::inspect::Args),
    /// Level statistics: ratio of spacings, unfolded spacings, form factor, number variance.
    Levels(commands::levels::Args),
    /// Diagonal matrix elements: smooth A(E), eigenstate-to-eigenstate fluctuations, thermal predictions.
    Diagonal(commands::diagonal::Args),
    /// Off-diagonal matrix elements: |f(ω)|² envelope, Gaussianity, diagonal/off-diagonal ratio.
    Offdiagonal(commands::offdiagonal::Args),
    /// Quench dynamics: diagonal ensemble, time trace, temporal fluctuations.
    Quench(commands::quench::Args),
    /// Finite-size scaling of the ETH figures across files and sectors.
    Scaling(commands::scaling::Args),
    /// Every analysis on every file, sector and observable, written to a report folder.
    Study(commands::study::Args),
}

/// Runs one parsed command line.
pub fn run(cli: Cli) -> Result<()> {
    match cli.command {
        Command::Demo(a) => commands::demo::run(&a),
        Command::Generate(a) => commands::generate::run(&a),
        Command::Inspect(a) => commands::inspect::run(&a),
        Command::Levels(a) => commands::levels::run(&a),
        Command::Diagonal(a) => commands::diagonal::run(&a),
        Command::Offdiagonal(a) => commands::offdiagonal::run(&a),
        Command::Quench(a) => commands::quench::run(&a),
        Command::Scaling(a) => commands::scaling::run(&a),
        Command::Study(a) => commands::study::run(&a),
    }
}
