//! Running a library call from Python: on a worker thread while the calling thread waits
//! without the GIL and looks for signals every 100 ms. Ctrl-C (or any signal handler that
//! raises) asks the library to stop ([`eigentherm::progress::interrupt`]: checked before
//! every block of a pass over the eigenvectors and before every sector), waits for the
//! worker to return, and raises the handler's exception (`KeyboardInterrupt`). Library
//! errors become [`Error`] with the binary's one-line message; a panic becomes an
//! [`Error`] too, never a crash of the interpreter.

use pyo3::prelude::*;
use serde::Serialize;
use std::panic::AssertUnwindSafe;
use std::sync::mpsc::{self, RecvTimeoutError};
use std::time::Duration;

pyo3::create_exception!(
    eigentherm,
    Error,
    pyo3::exceptions::PyValueError,
    "An eigentherm error: the message is the line the binary prints after `error: `; \
     `exit_code` is the binary's exit status (2: bad input or options, 1: analysis failed)."
);

/// The Python exception of a library error.
pub fn to_py_err(py: Python<'_>, e: &eigentherm::Error) -> PyErr {
    let err = Error::new_err(e.to_string());
    // an attribute that cannot be set leaves the message, which is what matters
    let _ = err.value(py).setattr("exit_code", e.exit_code());
    err
}

/// `r` with a library error raised as [`Error`].
pub fn or_raise<T>(r: eigentherm::Result<T>) -> PyResult<T> {
    r.map_err(|e| Python::attach(|py| to_py_err(py, &e)))
}

/// `value` serialised as `--json` prints it, `schema_version` included (compact: the same
/// numbers, fewer spaces).
pub fn json<T: Serialize>(value: &T) -> eigentherm::Result<String> {
    serde_json::to_string(&eigentherm::report::json::versioned(value))
        .map_err(|e| eigentherm::Error::other(format!("cannot serialise JSON: {e}")))
}

/// The text of a panic's payload.
fn panic_text(p: &(dyn std::any::Any + Send)) -> String {
    p.downcast_ref::<&str>()
        .map(|s| s.to_string())
        .or_else(|| p.downcast_ref::<String>().cloned())
        .unwrap_or_else(|| "unknown panic".to_string())
}

/// Runs `f` on a worker thread without the GIL (see the module's documentation).
pub fn run_detached<T: Send>(
    py: Python<'_>,
    f: impl FnOnce() -> eigentherm::Result<T> + Send,
) -> PyResult<T> {
    eigentherm::progress::clear_interrupt();
    let mut signal: Option<PyErr> = None;
    let outcome = std::thread::scope(|scope| {
        let (tx, rx) = mpsc::channel::<()>();
        let worker = std::thread::Builder::new()
            .name("eigentherm".into())
            .stack_size(8 << 20)
            .spawn_scoped(scope, move || {
                let r = std::panic::catch_unwind(AssertUnwindSafe(f));
                let _ = tx.send(());
                r
            })
            .map_err(|e| Error::new_err(format!("cannot start a worker thread: {e}")))?;
        let mut rx = rx;
        loop {
            let (back, got) = py.detach(move || {
                let got = rx.recv_timeout(Duration::from_millis(100));
                (rx, got)
            });
            rx = back;
            if !matches!(got, Err(RecvTimeoutError::Timeout)) {
                break;
            }
            if signal.is_none() {
                if let Err(e) = py.check_signals() {
                    eigentherm::progress::interrupt();
                    signal = Some(e);
                }
            }
        }
        let joined = py.detach(move || worker.join());
        Ok::<_, PyErr>(joined.unwrap_or_else(Err))
    })?;
    if let Some(e) = signal {
        return Err(e);
    }
    match outcome {
        Ok(Ok(t)) => Ok(t),
        Ok(Err(e)) => Err(to_py_err(py, &e)),
        Err(p) => Err(Error::new_err(format!(
            "internal error (please report): {}",
            panic_text(p.as_ref())
        ))),
    }
}
