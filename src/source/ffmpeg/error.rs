//! Why reading the `ffmpeg` program's output stopped before a clean end.

use crate::frame::PlaneSizeError;
use thiserror::Error;

/// A reason the pictures or their timestamps stopped coming; it becomes the message of the
/// [`SourceError`](super::super::SourceError) that ends the run.
#[derive(Debug, Error)]
pub(super) enum PipeError {
    #[error("the last frame arrived incomplete ({got} of {want} bytes)")]
    Incomplete { got: usize, want: usize },
    #[error(transparent)]
    Read(std::io::Error),
    #[error("a frame arrived without its timestamp from the showinfo filter")]
    NoTimestamp,
    #[error(transparent)]
    Plane(PlaneSizeError),
    #[error("ffmpeg sent nothing for {seconds} s and was stopped (a damaged file or a slow network path can do this); set {} to wait longer", super::pipe::STALL_ENV)]
    Stalled { seconds: f64 },
}
