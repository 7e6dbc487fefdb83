//! Error type of the library.
//!
//! Every error renders as one line that names the file, the dataset (where there
//! is one) and what is wrong, so that `main` can print `error: {e}` and exit
//! with a non-zero status. No error path panics.

use std::path::{Path, PathBuf};

/// One-line, user-facing error.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// A problem with a whole file (missing, not HDF5, no sector found, ...).
    #[error("{}: {problem}", file.display())]
    File {
        /// The file concerned.
        file: PathBuf,
        /// What is wrong, in plain words.
        problem: String,
    },
    /// A problem with one dataset or group inside a file.
    #[error("{}: {dataset}: {problem}", file.display())]
    Dataset {
        /// The file concerned.
        file: PathBuf,
        /// Full HDF5 path of the dataset or group, e.g. `/even/eigenvectors`.
        dataset: String,
        /// What is wrong, in plain words.
        problem: String,
    },
    /// A bad command-line value or combination of options.
    #[error("{0}")]
    Usage(String),
    /// An input/output error while writing results.
    #[error("{}: {source}", path.display())]
    Io {
        /// The path being written or read.
        path: PathBuf,
        /// The underlying error.
        #[source]
        source: std::io::Error,
    },
    /// Anything else (numerical failure and the like), already phrased for the user.
    #[error("{0}")]
    Other(String),
}

impl Error {
    /// Error about a whole file.
    pub fn file(file: impl AsRef<Path>, problem: impl Into<String>) -> Self {
        Error::File {
            file: file.as_ref().to_path_buf(),
            problem: one_line(problem.into()),
        }
    }

    /// Error about one dataset of a file.
    pub fn dataset(
        file: impl AsRef<Path>,
        dataset: impl Into<String>,
        problem: impl Into<String>,
    ) -> Self {
        Error::Dataset {
            file: file.as_ref().to_path_buf(),
            dataset: dataset.into(),
            problem: one_line(problem.into()),
        }
    }

    /// Error about the command line.
    pub fn usage(msg: impl Into<String>) -> Self {
        Error::Usage(one_line(msg.into()))
    }

    /// Error while reading or writing a path.
    pub fn io(path: impl AsRef<Path>, source: std::io::Error) -> Self {
        Error::Io {
            path: path.as_ref().to_path_buf(),
            source,
        }
    }

    /// Any other error, phrased for the user.
    pub fn other(msg: impl Into<String>) -> Self {
        Error::Other(one_line(msg.into()))
    }
}

/// Folds a possibly multi-line message (HDF5 error stacks are) into one line.
fn one_line(s: String) -> String {
    if s.contains('\n') {
        s.split('\n')
            .map(str::trim)
            .filter(|l| !l.is_empty())
            .collect::<Vec<_>>()
            .join("; ")
    } else {
        s
    }
}

/// Result alias of the library.
pub type Result<T, E = Error> = std::result::Result<T, E>;
