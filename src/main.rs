//! The `eigentherm` binary: parses the command line and hands it to the library.

use clap::Parser;

fn main() {
    let cli = eigentherm::cli::Cli::parse();
    if let Err(e) = eigentherm::cli::run(cli) {
        eprintln!("error: {e}");
        std::process::exit(1);
    }
}
