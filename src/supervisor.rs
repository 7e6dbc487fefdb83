//! The binary runs its work in a child process so that a crash inside the HDF5 C library
//! (which on a corrupted file can read through a wild pointer, measured with libhdf5 1.10.8:
//! 3 segmentation faults and 1 hang in 1,000 byte-flipped copies of a small file, all in its
//! global-heap reads of variable-length attributes) ends with one `error:` line instead of a
//! bare signal.
//!
//! The parent re-runs the same executable with the same arguments and [`CHILD_ENV`] set,
//! inheriting stdin, stdout and stderr, and waits. The child notes each input file it opens
//! in the file named by [`READING_ENV`] ([`note_reading`]); when the child is killed by a
//! signal other than SIGINT, SIGTERM, SIGKILL or SIGPIPE, the parent prints
//! `error: FILE: the HDF5 library crashed ...` naming the last file opened and exits 2. The
//! opening of a file (its structure and attributes) must finish within
//! [`OPEN_DEADLINE`]; a library call that hangs there ends the child with one `error:` line
//! ([`open_watchdog`]). `EIGENTHERM_SUPERVISOR=0` runs the work in the one process. The
//! Python module never forks: it reads in its own process.

use std::path::Path;
use std::time::Duration;

/// Set in the child's environment.
pub const CHILD_ENV: &str = "EIGENTHERM_CHILD";
/// The file (in the child's environment) where the child notes the input it opens.
pub const READING_ENV: &str = "EIGENTHERM_READING_LOG";
/// `0` runs everything in one process.
pub const SUPERVISOR_ENV: &str = "EIGENTHERM_SUPERVISOR";
/// Longest time the opening of one input file may take in the supervised child (seconds
/// in [`DEADLINE_ENV`] replace it).
pub const OPEN_DEADLINE: Duration = Duration::from_secs(30);
/// Seconds the opening of one file may take (default [`OPEN_DEADLINE`]).
pub const DEADLINE_ENV: &str = "EIGENTHERM_OPEN_DEADLINE";

fn deadline() -> Duration {
    std::env::var(DEADLINE_ENV)
        .ok()
        .and_then(|s| s.trim().parse::<f64>().ok())
        .filter(|s| s.is_finite() && *s > 0.0)
        .map_or(OPEN_DEADLINE, Duration::from_secs_f64)
}

/// Whether this process is the supervised child.
pub fn is_child() -> bool {
    std::env::var_os(CHILD_ENV).is_some()
}

/// Notes (in the supervised child) that `path` is being opened; nothing otherwise.
pub fn note_reading(path: &Path) {
    if let Some(log) = std::env::var_os(READING_ENV) {
        let abs = std::fs::canonicalize(path).unwrap_or_else(|_| path.to_path_buf());
        let _ = std::fs::write(log, abs.to_string_lossy().as_bytes());
    }
}

/// In the supervised child, a guard that ends the process with one `error:` line when the
/// opening of `path` has not finished within [`OPEN_DEADLINE`] (dropping it in time
/// disarms it); `None` elsewhere.
pub fn open_watchdog(path: &Path) -> Option<std::sync::mpsc::Sender<()>> {
    if !is_child() {
        return None;
    }
    let (tx, rx) = std::sync::mpsc::channel::<()>();
    let shown = crate::error::escape(&path.display().to_string());
    let limit = deadline();
    std::thread::spawn(move || {
        if let Err(std::sync::mpsc::RecvTimeoutError::Timeout) = rx.recv_timeout(limit) {
            eprintln!(
                "error: {shown}: reading the file's structure did not finish within {} s (the HDF5 library hangs on it: the file is probably corrupted)",
                limit.as_secs_f64()
            );
            std::process::exit(2);
        }
    });
    Some(tx)
}

/// Runs this executable again as the supervised child and returns its exit status, or
/// `None` when supervision is off (or this is the child) and the caller does the work.
pub fn supervise() -> Option<u8> {
    if is_child() || std::env::var(SUPERVISOR_ENV).is_ok_and(|v| v == "0") {
        return None;
    }
    let exe = std::env::current_exe().ok()?;
    let log = tempfile::NamedTempFile::new().ok()?;
    let status = std::process::Command::new(exe)
        .args(std::env::args_os().skip(1))
        .env(CHILD_ENV, "1")
        .env(READING_ENV, log.path())
        .status()
        .ok()?;
    if let Some(code) = status.code() {
        return Some(u8::try_from(code).unwrap_or(1));
    }
    Some(crashed(signal_of(&status), log.path()))
}

#[cfg(unix)]
fn signal_of(status: &std::process::ExitStatus) -> i32 {
    use std::os::unix::process::ExitStatusExt;
    status.signal().unwrap_or(0)
}

#[cfg(not(unix))]
fn signal_of(_: &std::process::ExitStatus) -> i32 {
    0
}

/// The exit status and the line for a child killed by signal `sig`.
fn crashed(sig: i32, log: &Path) -> u8 {
    // SIGINT 2, SIGKILL 9, SIGPIPE 13, SIGTERM 15: ended from outside, or a closed pipe
    match sig {
        13 => return 0,
        2 | 9 | 15 => return (128 + sig).clamp(0, 255) as u8,
        _ => {}
    }
    let name = match sig {
        4 => "SIGILL",
        6 => "SIGABRT",
        7 => "SIGBUS",
        8 => "SIGFPE",
        11 => "SIGSEGV",
        _ => "signal",
    };
    let file = std::fs::read_to_string(log).unwrap_or_default();
    let file = crate::error::escape(&file);
    if file.is_empty() {
        eprintln!("error: the analysis process ended with signal {sig} ({name}) before it opened any input");
    } else {
        eprintln!(
            "error: {file}: the HDF5 library crashed (signal {sig}, {name}) while this file, the last one opened, was read: it is probably corrupted (h5dump -H shows what the library can read of it)"
        );
    }
    2
}
