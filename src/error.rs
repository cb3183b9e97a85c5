//! Error pieces shared by the stages: a file that could not be opened, read or written, and a line of a
//! text input that does not parse. Each stage's own error enum wraps these (as `Io` and `Parse`) beside
//! the variants that are its own, so the same cause reads the same everywhere.

use std::path::PathBuf;
use thiserror::Error;

/// A file that could not be opened, read or written: which one, and what the system said.
#[derive(Debug, Error)]
#[error("{path}: {source}")]
pub struct IoError {
    pub path: PathBuf,
    #[source]
    pub source: std::io::Error,
}

impl IoError {
    /// A `map_err` adaptor: the system error `source` met while using `path`.
    pub fn at(path: impl Into<PathBuf>) -> impl FnOnce(std::io::Error) -> IoError {
        let path = path.into();
        move |source| IoError { path, source }
    }
}

/// A line of a text input that does not parse: the file, the line (1-based, as an editor shows it) and
/// what is wrong with it.
#[derive(Debug, Error)]
#[error("{path}, line {line}: {message}")]
pub struct LineError {
    pub path: PathBuf,
    pub line: usize,
    pub message: String,
}
