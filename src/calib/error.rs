//! Calibration errors: each says what was wrong, where (file, line) and what to do.

use std::path::PathBuf;
use thiserror::Error;

/// Everything that can go wrong reading, fitting or writing a calibration.
#[derive(Debug, Error)]
pub enum CalibError {
    #[error("cannot read calibration file {}: {source}", path.display())]
    Read {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("cannot write {}: {source}; check that the folder exists and is writable", path.display())]
    Write {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("{}:{line}: {message}", path.display())]
    Syntax {
        path: PathBuf,
        /// 1-based line, 0 when unknown.
        line: usize,
        message: String,
    },
    #[error(
        "{}: calibration format version {found} is not supported (this build reads version {supported}); \
         recalibrate with `spotlever calibrate`",
        path.display()
    )]
    Version {
        path: PathBuf,
        found: u32,
        supported: u32,
    },
    #[error("{}: {message}", path.display())]
    Invalid { path: PathBuf, message: String },
    #[error(
        "the calibration (made from {source_image:?}) is for {calib_width}x{calib_height} px images, but these \
         frames are {width}x{height} px; recalibrate with `spotlever calibrate` on an image from this camera \
         at this resolution"
    )]
    ImageSize {
        calib_width: u32,
        calib_height: u32,
        width: u32,
        height: u32,
        source_image: String,
    },
    #[error("{}:{line}: {message}", path.display())]
    PointsCsv {
        path: PathBuf,
        line: usize,
        message: String,
    },
    #[error(
        "{what}: only {found} point pairs, at least 4 are needed for a homography; add more pairs"
    )]
    TooFewPoints { what: String, found: usize },
    #[error("degenerate point pairs: {message}")]
    Degenerate { message: String },
    #[error("no grid found in {image}: {reason}")]
    Grid { image: String, reason: String },
    #[error("cannot read image {}: {message}", path.display())]
    Image { path: PathBuf, message: String },
}
