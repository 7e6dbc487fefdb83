//! Error type of the library.
//!
//! Every error renders as one line that names the file, the dataset (where there
//! is one) and what is wrong, so that `main` can print `error: {e}` and exit
//! with a non-zero status ([`Error::exit_code`]: 2 for a bad command line or a bad
//! input file, 1 for an analysis that cannot be carried out). No error path panics.
//!
//! **Context.** Library code below the pipeline does not know which file it is working
//! on: it returns [`Error::other`]. The one way to add the file and dataset is
//! [`Error::at`] (or [`Context::at`] on a `Result`): it names them on errors that lack
//! them and leaves errors that already name a file unchanged, so that no message names
//! the file twice.

use std::path::{Path, PathBuf};

/// One-line, user-facing error.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// A problem with a whole file (missing, not HDF5, no sector found, ...).
    #[error("{}: {problem}", escape_path(file))]
    File {
        /// The file concerned.
        file: PathBuf,
        /// What is wrong, in plain words.
        problem: String,
    },
    /// A problem with one dataset or group inside a file.
    #[error("{}: {}: {problem}", escape_path(file), escape(dataset))]
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
    #[error("{}: {}", escape_path(path), escape(&source.to_string()))]
    Io {
        /// The path being written or read.
        path: PathBuf,
        /// The underlying error.
        #[source]
        source: std::io::Error,
    },
    /// An analysis that cannot be carried out on one dataset (too few states, a singular
    /// fit, ...): an [`Error::Other`] given its file and dataset by [`Error::at`].
    #[error("{}: {}: {problem}", escape_path(file), escape(dataset))]
    Analysis {
        /// The file concerned.
        file: PathBuf,
        /// Full HDF5 path of the dataset or group.
        dataset: String,
        /// What went wrong, in plain words.
        problem: String,
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

impl Error {
    /// The error with its file and dataset: an [`Error::Other`] becomes an
    /// [`Error::Analysis`] naming them; every other error already names what it concerns
    /// (or is not about a file) and is returned unchanged.
    pub fn at(self, file: impl AsRef<Path>, dataset: impl Into<String>) -> Error {
        match self {
            Error::Other(problem) => Error::Analysis {
                file: file.as_ref().to_path_buf(),
                dataset: dataset.into(),
                problem,
            },
            e => e,
        }
    }

    /// Exit status of the binary for this error: 2 for a usage error or a problem with
    /// an input file, 1 for an analysis or output error.
    pub fn exit_code(&self) -> u8 {
        match self {
            Error::Usage(_) | Error::File { .. } | Error::Dataset { .. } => 2,
            Error::Io { .. } | Error::Analysis { .. } | Error::Other(_) => 1,
        }
    }

    /// True when writing stopped because the reader of our output went away (a closed
    /// pipe, as in `eigentherm levels FILE | head`): a normal end, not an error.
    pub fn is_broken_pipe(&self) -> bool {
        matches!(self, Error::Io { source, .. } if source.kind() == std::io::ErrorKind::BrokenPipe)
    }
}

/// [`Error::at`] on the error of a `Result`.
pub trait Context<T> {
    /// The result, its error given the file and dataset (see [`Error::at`]).
    fn at(self, file: impl AsRef<Path>, dataset: impl Into<String>) -> Result<T>;
}

impl<T> Context<T> for Result<T> {
    fn at(self, file: impl AsRef<Path>, dataset: impl Into<String>) -> Result<T> {
        self.map_err(|e| e.at(file, dataset))
    }
}

/// Folds a possibly multi-line message (HDF5 error stacks are) into one line, and shows
/// any other control character as an escape.
fn one_line(s: String) -> String {
    let s = if s.contains('\n') {
        s.split('\n')
            .map(str::trim)
            .filter(|l| !l.is_empty())
            .collect::<Vec<_>>()
            .join("; ")
    } else {
        s
    };
    escape(&s)
}

/// A name or message with its control characters shown as escapes (`\n`, `\t`, `\r`,
/// `\u{1b}`, ...), so that a name read from a file or the command line can never break a
/// one-line error or warning. Other characters are kept as they are.
pub fn escape(s: &str) -> String {
    if !s.chars().any(char::is_control) {
        return s.to_string();
    }
    s.chars()
        .map(|c| {
            if c.is_control() {
                c.escape_default().to_string()
            } else {
                c.to_string()
            }
        })
        .collect()
}

/// [`escape`] of a path as displayed.
pub fn escape_path(p: &Path) -> String {
    escape(&p.display().to_string())
}

/// Result alias of the library.
pub type Result<T, E = Error> = std::result::Result<T, E>;

/// What kind of file system object `m` describes, in words (`FIFO`, `character device`, ...).
pub fn file_kind(m: &std::fs::Metadata) -> &'static str {
    let t = m.file_type();
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if t.is_fifo() {
            return "FIFO (named pipe)";
        }
        if t.is_char_device() {
            return "character device";
        }
        if t.is_block_device() {
            return "block device";
        }
        if t.is_socket() {
            return "socket";
        }
    }
    if t.is_dir() {
        "directory"
    } else if t.is_symlink() {
        "symbolic link"
    } else if t.is_file() {
        "regular file"
    } else {
        "special file"
    }
}

/// An error unless `path` is absent or a regular file (the target of a write by temporary
/// name and rename, which would replace a device, pipe or directory entry otherwise). A
/// symbolic link is followed: its target must be a regular file.
pub fn require_replaceable(path: &std::path::Path) -> Result<()> {
    match std::fs::metadata(path) {
        Ok(m) if !m.is_file() => Err(Error::file(
            path,
            format!(
                "exists and is a {}, not a regular file: refusing to replace it",
                file_kind(&m)
            ),
        )),
        _ => Ok(()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_with_control_characters_stay_on_one_line() {
        // our own convention (common practice, no source): Rust's escape_default spelling
        let e = Error::dataset("a\nb.h5", "/x\ny\t", "bad \u{1b}[31m value");
        assert_eq!(e.to_string(), "a\\nb.h5: /x\\ny\\t: bad \\u{1b}[31m value");
        assert_eq!(escape("plain é"), "plain é");
        // HDF5 error stacks are folded, not escaped
        assert_eq!(Error::other("one\n  two\n").to_string(), "one; two");
    }
}
