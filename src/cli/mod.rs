//! The command line: clap definitions and one small file per subcommand that turns flags
//! into the library's option structs, calls the pipeline and hands the result to the
//! report layer. clap types never leave this module; every flag is defined once
//! ([`args`]) and resolved once.

pub mod args;
pub mod completions;
pub mod demo;
pub mod elements;
pub mod entanglement;
pub mod gauge;
pub mod generate;
pub mod inspect;
pub mod levels;
pub mod output;
pub mod quench;
pub mod scaling;
pub mod study;

use crate::error::Result;
use clap::{Parser, Subcommand};

/// Level statistics and eigenstate-thermalization analyses of stored eigenbases.
#[derive(Debug, Parser)]
#[command(name = "eigentherm", version, about, long_about = None)]
pub struct Cli {
    /// Worker threads of the matrix products and parallel loops (default: every core).
    #[arg(long, global = true, value_name = "N")]
    pub threads: Option<usize>,
    /// Progress on stderr: auto (bars on a terminal), always (bars, or one plain log line per
    /// stage when stderr is a file or pipe), never (default: $EIGENTHERM_PROGRESS, else auto).
    #[arg(long, global = true, value_name = "WHEN", value_parser = ["auto", "always", "never"])]
    pub progress: Option<String>,
    /// The subcommand.
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
#[allow(clippy::large_enum_variant)] // parsed once; boxing the option structs buys nothing
pub enum Command {
    /// Build the files of an invented demo scenario and run every analysis on them.
    Demo(demo::Args),
    /// Write the eigenbasis of a reference model (spin chain or random matrix) to an HDF5 file.
    Generate(generate::Args),
    /// List the sectors, datasets and attributes of a file; optionally verify the eigenbasis.
    Inspect(inspect::Args),
    /// Level statistics: ratio of spacings, unfolded spacings, form factor, number variance.
    Levels(levels::Args),
    /// Diagonal matrix elements: smooth A(E), eigenstate-to-eigenstate fluctuations, thermal predictions.
    Diagonal(elements::DiagonalArgs),
    /// Off-diagonal matrix elements: |f(ω)|² envelope, Gaussianity, diagonal/off-diagonal ratio.
    Offdiagonal(elements::OffdiagonalArgs),
    /// Quench dynamics: diagonal ensemble, time trace, temporal fluctuations.
    Quench(quench::Args),
    /// Adiabatic gauge potential norm and fidelity susceptibility of each eigenstate.
    Gauge(gauge::Args),
    /// Entanglement entropy of each eigenstate for a cut of the chain, against the random-state value.
    Entanglement(entanglement::Args),
    /// Finite-size scaling of the ETH figures across files and sectors.
    Scaling(scaling::Args),
    /// Every analysis on every file, sector and observable, written to a report folder.
    Study(study::Args),
    /// Write the completion script of a shell (bash, zsh or fish) to stdout.
    Completions(completions::CompletionsArgs),
    /// Write the manual page (roff) to stdout, or every page into a folder with --dir.
    Manpage(completions::ManpageArgs),
}

/// The command line of this process, parsed (help, version and usage errors end the
/// process here, with clap's own exit statuses 0 and 2).
pub fn parse() -> Cli {
    Cli::parse()
}

/// Names of the subcommands, in the order of `eigentherm --help` (for tests and
/// packaging checks; no clap type leaves this module).
pub fn subcommand_names() -> Vec<String> {
    completions::subcommand_names()
}

/// Runs one parsed command line.
pub fn run(cli: Cli) -> Result<()> {
    crate::pipeline::flags::set_threads(cli.threads)?;
    crate::pipeline::flags::set_progress(cli.progress.as_deref())?;
    match cli.command {
        Command::Demo(a) => demo::run(&a),
        Command::Generate(a) => generate::run(&a),
        Command::Inspect(a) => inspect::run(&a),
        Command::Levels(a) => levels::run(&a),
        Command::Diagonal(a) => elements::run_diagonal(&a),
        Command::Offdiagonal(a) => elements::run_offdiagonal(&a),
        Command::Quench(a) => quench::run(&a),
        Command::Gauge(a) => gauge::run(&a),
        Command::Entanglement(a) => entanglement::run(&a),
        Command::Scaling(a) => scaling::run(&a),
        Command::Study(a) => study::run(&a),
        Command::Completions(a) => completions::run_completions(&a),
        Command::Manpage(a) => completions::run_manpage(&a),
    }
}
