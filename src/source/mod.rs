//! Frame sources: everything that yields frames (image sequences, video files through the `ffmpeg`
//! program, the in-process H.264 decoder, cameras, replays) behind one trait.
//!
//! A source hands out [`Delivery`] items in time order. A frame that cannot be read (a corrupt image in
//! the middle of a sequence) is `Delivery::Unreadable` and the run goes on; a [`SourceError`] means the
//! source cannot continue at all.

use crate::frame::Frame;
use crate::units::Seconds;
use thiserror::Error;

/// What a source yields for each frame position.
#[derive(Debug, Clone)]
pub enum Delivery {
    Frame(Frame),
    /// A frame that exists but could not be decoded; the run records it and continues.
    Unreadable {
        index: u64,
        t: Seconds,
        origin: String,
        reason: String,
    },
}

/// What a source knows about itself before reading.
#[derive(Debug, Clone, Default)]
pub struct SourceInfo {
    /// Human description ("412 PNG files in runs/tuesday", "clip.mp4, h264 1920x1080").
    pub description: String,
    pub width: usize,
    pub height: usize,
    /// Number of frames it expects to deliver (after thinning), when known: drives the progress bar.
    pub expected_frames: Option<u64>,
}

/// A fatal problem with a source. Every variant says where and what to do.
#[derive(Debug, Error)]
pub enum SourceError {
    #[error("{path}: no such file or folder; check the path")]
    Missing { path: String },
    #[error("{path}: {message}")]
    Invalid { path: String, message: String },
    #[error("{path}, line {line}: {message}")]
    BadLine {
        path: String,
        line: usize,
        message: String,
    },
    #[error("{origin}: {message}")]
    Decode { origin: String, message: String },
    #[error("{path}: {source}")]
    Io {
        path: String,
        #[source]
        source: std::io::Error,
    },
}

/// Anything that produces frames in time order.
pub trait FrameSource {
    /// What the source is, as far as it knows before reading.
    fn info(&self) -> &SourceInfo;
    /// The next frame, `None` at the end.
    fn next_delivery(&mut self) -> Option<Result<Delivery, SourceError>>;
}
