//! Frame sources: everything that yields frames (image sequences, video files through the `ffmpeg`
//! program, the in-process H.264 decoder, cameras, replays) behind one trait.
//!
//! A source hands out [`Delivery`] items in time order. A frame that cannot be read (a corrupt image in
//! the middle of a sequence) is `Delivery::Unreadable` and the run goes on; a [`SourceError`] means the
//! source cannot continue at all.

pub mod camera;
pub mod replay;

use crate::error::IoError;
use crate::frame::{Channel, Frame, Roi};
use crate::units::Seconds;
use std::path::{Path, PathBuf};
use thiserror::Error;

mod annexb;
mod ffmpeg;
mod h264;
mod keyplan;
#[cfg(feature = "linked-ffmpeg")]
mod linked;
mod natural;
mod pixels;
mod pixfmt;
mod sequence;
mod thin;
mod times;

pub use ffmpeg::{ffmpeg_available, FfmpegSource};
pub use h264::BuiltinH264Source;
#[cfg(feature = "linked-ffmpeg")]
pub use linked::LinkedSource;
pub use natural::natural_cmp;
pub use sequence::ImageSequence;
pub use thin::{keyframes_suffice, Thinner};
pub use times::read_times;

/// How to advise a user who needs the `ffmpeg` program.
pub const INSTALL_FFMPEG: &str =
    "install the ffmpeg program (one command per platform in the README, 'Video input')";

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
    /// When the source delivers only this rectangle of each picture (see [`OpenOptions::crop`]): its
    /// planes are the rectangle's size, and a pixel (x, y) of a plane is (x + crop.x, y + crop.y) of
    /// the `width` x `height` picture. `None`: planes are whole pictures.
    pub crop: Option<Roi>,
}

impl SourceInfo {
    /// Width and height of the planes the source delivers: the crop's, or the whole picture's.
    pub fn plane_size(&self) -> (usize, usize) {
        self.crop
            .map_or((self.width, self.height), |r| (r.width, r.height))
    }
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
    /// The video ended early: frames up to `frames` were delivered, then decoding stopped.
    #[error("{origin}: decoding stopped after {frames} frames (last good frame at t = {t_s:.3} s): {message}; the file looks truncated, the rows before that point are kept")]
    Truncated {
        origin: String,
        frames: u64,
        t_s: f64,
        message: String,
    },
    /// The file needs a decoder this build cannot run.
    #[error("{path}: {codec}: {advice}")]
    NeedsDecoder {
        path: String,
        codec: String,
        advice: String,
    },
    #[error(transparent)]
    Io(#[from] IoError),
}

impl SourceError {
    /// Decoding of `origin` stopped early for `message`: `Decode` when no frame had come out yet,
    /// else `Truncated` after `frames` frames, the last at `last_t_s`.
    pub(crate) fn stopped(origin: &Path, frames: u64, last_t_s: f64, message: String) -> Self {
        let origin = origin.display().to_string();
        if frames == 0 {
            return SourceError::Decode {
                origin,
                message: format!("no frame could be decoded ({message})"),
            };
        }
        SourceError::Truncated {
            origin,
            frames,
            t_s: last_t_s,
            message,
        }
    }

    /// An error opening or reading `path`: `Missing` when it does not exist.
    pub(crate) fn from_io(path: &Path, source: std::io::Error) -> Self {
        let path = path.display().to_string();
        match source.kind() {
            std::io::ErrorKind::NotFound => SourceError::Missing { path },
            _ => SourceError::Io(IoError {
                path: path.into(),
                source,
            }),
        }
    }
}

/// Anything that produces frames in time order.
pub trait FrameSource {
    /// What the source is, as far as it knows before reading.
    fn info(&self) -> &SourceInfo;
    /// The next frame, `None` at the end.
    fn next_delivery(&mut self) -> Option<Result<Delivery, SourceError>>;
    /// Give a delivered frame back once it has been used, so its pixel buffer can be filled again
    /// instead of allocating a new one. Optional: a frame that is simply dropped costs only speed.
    fn recycle(&mut self, frame: Frame) {
        drop(frame);
    }
}

/// Whether this build has ffmpeg's libraries linked in (the `linked-ffmpeg` feature).
pub const LINKED_FFMPEG: bool = cfg!(feature = "linked-ffmpeg");

/// Which decoder reads video files.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, clap::ValueEnum)]
pub enum VideoDecoder {
    /// ffmpeg's libraries in this process when the build has them, else the `ffmpeg` program when
    /// it is on PATH, else the built-in H.264 reader.
    #[default]
    Auto,
    /// ffmpeg's libraries inside this process (builds with the `linked-ffmpeg` feature only).
    Linked,
    /// Always the `ffmpeg` program.
    Ffmpeg,
    /// Always the built-in reader (MP4 with H.264 without B-frames).
    Builtin,
}

/// How to open a source from a path.
#[derive(Debug, Clone, Default)]
pub struct OpenOptions {
    /// Which colour channel becomes the plane.
    pub channel: Channel,
    /// Keep at most one frame per interval of this length.
    pub every: Option<Seconds>,
    /// Frame rate of an image sequence without a times file.
    pub fps: Option<f64>,
    /// Times file of an image sequence (`file,t_s`), instead of the folder's `times.csv`.
    pub times: Option<PathBuf>,
    pub decoder: VideoDecoder,
    /// Deliver only this rectangle of each picture, when the source can cut it out before the pixels
    /// reach this process (the `ffmpeg` source does; the others ignore it and deliver whole pictures).
    /// [`SourceInfo::crop`] tells which happened.
    pub crop: Option<Roi>,
}

/// A video source's description: "clip.mp4: h264 1920x1080, decoded by ..., key frames only, only the
/// WxH rectangle at (x, y) read".
pub(crate) fn video_description(
    path: &Path,
    codec: &str,
    size: (usize, usize),
    decoded_by: &str,
    key_frames_only: bool,
    crop: Option<Roi>,
) -> String {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let mut d = format!(
        "{name}: {codec} {}x{}, decoded {decoded_by}",
        size.0, size.1
    );
    if key_frames_only {
        d.push_str(", key frames only");
    }
    if let Some(r) = crop {
        d.push_str(&format!(
            ", only the {}x{} rectangle at ({}, {}) read",
            r.width, r.height, r.x, r.y
        ));
    }
    d
}

/// A decoded video frame, named for messages as "frame N at t = T s of PATH".
pub(crate) fn video_frame(
    path: &Path,
    index: u64,
    t: Seconds,
    plane: crate::frame::Plane,
) -> Frame {
    Frame {
        index,
        t,
        plane,
        origin: format!("frame {index} at t = {:.3} s of {}", t.0, path.display()),
    }
}

/// File extensions read as still images.
pub const IMAGE_EXTENSIONS: [&str; 6] = ["png", "jpg", "jpeg", "tif", "tiff", "bmp"];

pub(crate) fn is_image_path(p: &Path) -> bool {
    p.extension()
        .and_then(|e| e.to_str())
        .map(|e| IMAGE_EXTENSIONS.contains(&e.to_ascii_lowercase().as_str()))
        .unwrap_or(false)
}

/// Open whatever `path` names: a folder of images, a glob pattern of images (`runs/*.png`), or a
/// video file.
pub fn open(path: &Path, opts: &OpenOptions) -> Result<Box<dyn FrameSource>, SourceError> {
    if let Some(e) = opts.every {
        if !(e.0.is_finite() && e.0 > 0.0) {
            return Err(SourceError::Invalid {
                path: path.display().to_string(),
                message: format!(
                    "--every {} is not a positive number of seconds; give e.g. --every 1",
                    e.0
                ),
            });
        }
    }
    let text = path.to_string_lossy();
    let looks_glob = text.contains(['*', '?', '[']);
    if path.is_dir() || (looks_glob && !path.exists()) {
        return Ok(Box::new(ImageSequence::open(path, opts)?));
    }
    if !path.exists() {
        return Err(SourceError::Missing {
            path: path.display().to_string(),
        });
    }
    if let Ok(meta) = std::fs::metadata(path) {
        if !meta.is_file() {
            return Err(SourceError::Invalid {
                path: path.display().to_string(),
                message: format!(
                    "is {}, not a video file or a folder of images; save the video to a file and give that file",
                    crate::outfile::file_type_name(&meta)
                ),
            });
        }
    }
    if is_image_path(path) {
        return Err(SourceError::Invalid {
            path: path.display().to_string(),
            message: "a single image is not a run; give the folder that holds the image sequence (or a pattern such as 'frames/*.png')".into(),
        });
    }
    if opts.fps.is_some() || opts.times.is_some() {
        return Err(SourceError::Invalid {
            path: path.display().to_string(),
            message: "a video carries its own frame times; --fps and --times apply to image sequences only".into(),
        });
    }
    let decoder = match opts.decoder {
        VideoDecoder::Auto if LINKED_FFMPEG => VideoDecoder::Linked,
        VideoDecoder::Auto if ffmpeg_available() => VideoDecoder::Ffmpeg,
        VideoDecoder::Auto => VideoDecoder::Builtin,
        d => d,
    };
    match decoder {
        VideoDecoder::Linked => open_linked(path, opts),
        VideoDecoder::Ffmpeg => Ok(Box::new(FfmpegSource::open(path, opts)?)),
        _ => Ok(Box::new(BuiltinH264Source::open(path, opts)?)),
    }
}

#[cfg(feature = "linked-ffmpeg")]
fn open_linked(path: &Path, opts: &OpenOptions) -> Result<Box<dyn FrameSource>, SourceError> {
    Ok(Box::new(LinkedSource::open(path, opts)?))
}

#[cfg(not(feature = "linked-ffmpeg"))]
fn open_linked(path: &Path, _opts: &OpenOptions) -> Result<Box<dyn FrameSource>, SourceError> {
    Err(SourceError::NeedsDecoder {
        path: path.display().to_string(),
        codec: "video".into(),
        advice: "this build has no ffmpeg libraries linked in; use --decoder ffmpeg, or rebuild \
                 with --features linked-ffmpeg (README, 'Video input')"
            .into(),
    })
}
