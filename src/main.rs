//! The `eigentherm` binary: parses the command line, hands it to the library, and turns
//! the outcome into an exit status (0 ok, 1 analysis error, 2 usage or input error; a
//! closed output pipe is a normal end). The work runs in a supervised child process
//! (`eigentherm::supervisor`), so that a crash of the HDF5 library on a corrupted file
//! ends with one `error:` line.

use std::process::ExitCode;

fn main() -> ExitCode {
    let cli = eigentherm::cli::parse();
    if let Some(code) = eigentherm::supervisor::supervise() {
        return ExitCode::from(code);
    }
    match eigentherm::cli::run(cli) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) if e.is_broken_pipe() => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::from(e.exit_code())
        }
    }
}
