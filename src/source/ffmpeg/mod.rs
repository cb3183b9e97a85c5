//! Video files through the `ffmpeg` program: `ffprobe` for the stream's facts, then `ffmpeg` decoding
//! to raw 8-bit planes on a pipe, one frame at a time, never the whole video in memory.
//!
//! For luma, the decoder's own Y plane is sent as it is (`extractplanes`, a plain copy) and kept as
//! studio-range luma when the stream is limited-range (widened only where the finder reads it),
//! instead of asking ffmpeg's scaler for a gray picture, which costs about half as much again as
//! decoding. A reader thread drains the pipe
//! into a few recycled buffers, so decoding and tracking overlap and memory stays flat.
//!
//! Presentation times are exact: the `showinfo` filter reports every frame's integer timestamp and
//! time base on stderr, in the same order as the frames on the pipe, and frames pass through without
//! being duplicated or dropped (`-vsync passthrough`). With `--every`, when the first frame of every
//! interval is a key frame (checked from the packet index with `ffprobe`, without decoding), the
//! decoder skips all other frames (`-skip_frame nokey`) and the kept frames are the same ones a full
//! decode would keep.
//!
//! One concern a file: [`probe`] (ffprobe), [`command`] (the command lines), [`pipe`] (the pipe
//! reader), [`stderr`] (timing and problem lines), [`source`] (the [`FfmpegSource`] itself).

mod command;
mod error;
mod pipe;
mod probe;
mod source;
mod stderr;

pub use probe::ffmpeg_available;
pub use source::FfmpegSource;
