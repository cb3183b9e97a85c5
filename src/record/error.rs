//! Everything that can stop a recording, or keep one from starting.

use crate::calib::CalibError;
use crate::error::IoError;
use crate::source::camera::CameraError;
use crate::source::replay::PaceError;
use crate::source::SourceError;
use crate::track::TrackFileError;
use std::path::PathBuf;
use thiserror::Error;

/// Everything that can stop a recording. Each says where and what to do.
#[derive(Debug, Error)]
pub enum RecordError {
    #[error("{path} already exists; add --append to continue that run or --force to replace it (or choose another --out)")]
    RunExists { path: PathBuf },
    #[error("{path} exists but holds no run.toml, so it is not a run folder; refusing to replace it; choose another --out")]
    NotARunFolder { path: PathBuf },
    #[error("{path} does not hold a run to continue ({reason}); drop --append to start a new run")]
    NothingToAppend { path: PathBuf, reason: String },
    #[error(transparent)]
    Io(#[from] IoError),
    #[error("{path}: {message}")]
    Metadata { path: PathBuf, message: String },
    #[error(transparent)]
    Track(#[from] TrackFileError),
    #[error("{path}: cannot write the kept frame as JPEG: {message}")]
    Jpeg { path: PathBuf, message: String },
    #[error("frame source failed: {0}")]
    Source(#[from] SourceError),
    #[error(transparent)]
    Camera(#[from] CameraError),
    /// The source could not be opened when it was checked, before the run began.
    #[error(transparent)]
    Open(SourceError),
    #[error(transparent)]
    Pace(#[from] PaceError),
    #[error(transparent)]
    Calibration(#[from] CalibError),
    #[error("--calib {path}: {error}")]
    CalibrationSize { path: String, error: CalibError },
    #[error("--resolution {text:?}: write it as WIDTHxHEIGHT, e.g. 1280x720")]
    BadResolution { text: String },
    #[error("--resolution applies to cameras only; a replay keeps its recorded size")]
    ResolutionForReplay,
    #[error("{option} {value} is not a positive number")]
    NotPositive { option: &'static str, value: f64 },
    #[error(
        "terminal: {0}; run with output redirected to a file to get plain status lines instead"
    )]
    Terminal(std::io::Error),
}

impl RecordError {
    pub(crate) fn io(path: impl Into<PathBuf>) -> impl FnOnce(std::io::Error) -> RecordError {
        let path = path.into();
        move |source| RecordError::Io(IoError { path, source })
    }
}
