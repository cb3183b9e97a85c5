//! What can go wrong with a track file or a tracking run, naming the file, line or frame.

use crate::error::{IoError, LineError};
use crate::source::SourceError;
use std::path::PathBuf;
use thiserror::Error;

/// Problems reading or writing a track file.
#[derive(Debug, Error)]
pub enum TrackFileError {
    #[error("{path}: {source}; check that the folder exists and is writable")]
    Create {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
    #[error(transparent)]
    Io(#[from] IoError),
    #[error(transparent)]
    Parse(#[from] LineError),
}

/// Problems of a run that tracks a source into a track file.
#[derive(Debug, Error)]
pub enum TrackRunError {
    /// Creating or flushing the track file.
    #[error(transparent)]
    File(#[from] TrackFileError),
    /// Writing one frame's row.
    #[error("writing frame {frame}")]
    Write {
        frame: u64,
        #[source]
        source: TrackFileError,
    },
    /// The source could not go on.
    #[error(transparent)]
    Source(#[from] SourceError),
}
