//! Live recording: the loop that reads a camera (or a replay), tracks the spot and writes the run as it
//! goes, so that a run of hours survives a crash, a kicked cable or a kill.
//!
//! A run folder holds `track.csv` (one row per frame, flushed at least twice a second), `run.toml`
//! (when and how the run was made, one entry per recording session), `events.csv` (`t_s,label`, one
//! row per marked mass move) and `frames/` (every Nth frame as JPEG with `frames/times.csv`, so the run
//! can be tracked again from its evidence frames).
//!
//! Pieces: [`run_dir`] (folder, metadata, append/replace rules), [`live`] (per-frame work),
//! [`feed`] (the reading thread, with retries for a camera that stops), [`session`] (the loop tying
//! frames, keys, signals and the display together), [`view`] (terminal display and plain status
//! lines), [`input`] (keys, stdin commands, stop signals), [`events`], [`keep`], [`trace`],
//! [`camera`].

pub mod camera;
pub mod events;
pub mod feed;
pub mod input;
pub mod keep;
pub mod live;
pub mod run_dir;
pub mod session;
pub mod trace;
pub mod view;

use crate::error::IoError;
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
    #[error("this build of spotlever has no camera support; rebuild with `cargo build --release --features camera` (on Linux first install libclang-dev), or replay a recording with --source")]
    NoCameraSupport,
    #[error("no camera found{detail}; check that one is plugged in and that you may use it (on Linux: member of the 'video' group, /dev/video* present)")]
    NoCamera { detail: String },
    #[error("camera {camera}: {message}")]
    Camera { camera: String, message: String },
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
