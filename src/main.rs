//! The `eigentherm` binary: parses the command line, hands it to the library, and turns
//! the outcome into an exit status (0 ok, 1 analysis error, 2 usage or input error; a
//! closed output pipe is a normal end).

use std::process::ExitCode;

fn main() -> ExitCode {
    let cli = eigentherm::cli::parse();
    match eigentherm::cli::run(cli) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) if e.is_broken_pipe() => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::from(e.exit_code())
        }
    }
}
