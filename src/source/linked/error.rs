//! Why a picture from ffmpeg's libraries could not become a frame.

use crate::frame::PlaneSizeError;
use ffmpeg_next as av;
use thiserror::Error;

/// A reason decoding cannot go on; it becomes the message of the
/// [`SourceError`](super::super::SourceError) that ends the run.
#[derive(Debug, Error)]
pub(super) enum LinkedError {
    #[error("ffmpeg's scaler cannot convert {format} pictures ({source})")]
    NoScaler { format: String, source: av::Error },
    #[error("ffmpeg's scaler failed ({0})")]
    Scaler(av::Error),
    #[error("no picture layout")]
    NoLayout,
    #[error("the decoder's picture is smaller than it says")]
    ShortPicture,
    #[error(transparent)]
    Plane(PlaneSizeError),
    /// The picture after this many decoded frames came without a timestamp.
    #[error("the picture after frame {0} has no timestamp")]
    NoTimestamp(u64),
    #[error(
        "the pictures change from {}x{} to {}x{} (or change pixel format) at frame {index}; \
         one run needs one picture size: cut the video there (ffmpeg -t) and track each part",
        from.0, from.1, to.0, to.1
    )]
    PictureChange {
        from: (usize, usize),
        to: (usize, usize),
        index: u64,
    },
}
