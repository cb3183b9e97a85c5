//! One picture from any source: its index, its time, and one pixel plane (a single colour channel or luma).
//!
//! Sources reduce colour images to a plane as they read them (see [`Channel`]), so every later stage sees
//! plain intensities. Planes are `u16` so 8-bit and 16-bit inputs share one path; `white` is the value a
//! clipped pixel has (255 for 8-bit data).

use crate::units::Seconds;
use ndarray::Array2;
use serde::{Deserialize, Serialize};

/// Which colour channel becomes the plane. A red laser is seen best in `Red`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize, clap::ValueEnum)]
#[serde(rename_all = "lowercase")]
pub enum Channel {
    Red,
    Green,
    Blue,
    /// ITU-R BT.601 luma, 0.299 R + 0.587 G + 0.114 B.
    #[default]
    Luma,
}

impl Channel {
    /// Reduce one RGB pixel to this channel's value.
    #[inline]
    pub fn from_rgb(self, r: u16, g: u16, b: u16) -> u16 {
        match self {
            Channel::Red => r,
            Channel::Green => g,
            Channel::Blue => b,
            Channel::Luma => {
                ((299 * r as u32 + 587 * g as u32 + 114 * b as u32 + 500) / 1000) as u16
            }
        }
    }
}

/// A single-channel image, indexed `[(row, column)]` = `[(y, x)]`.
#[derive(Debug, Clone, PartialEq)]
pub struct Plane {
    pub pixels: Array2<u16>,
    /// The value of a clipped (saturated) pixel: 255 for 8-bit data, 65535 for 16-bit.
    pub white: u16,
}

impl Plane {
    pub fn new(pixels: Array2<u16>, white: u16) -> Self {
        Self { pixels, white }
    }
    pub fn width(&self) -> usize {
        self.pixels.ncols()
    }
    pub fn height(&self) -> usize {
        self.pixels.nrows()
    }
    /// Build an 8-bit plane from row-major bytes.
    pub fn from_u8(width: usize, height: usize, bytes: &[u8]) -> Self {
        let v: Vec<u16> = bytes.iter().map(|&b| b as u16).collect();
        Self::new(
            Array2::from_shape_vec((height, width), v).expect("bytes match width x height"),
            255,
        )
    }
}

/// One delivered frame.
#[derive(Debug, Clone)]
pub struct Frame {
    /// Position in the source, counting from 0 (before any `--every` thinning).
    pub index: u64,
    /// Presentation time since the start of the source.
    pub t: Seconds,
    pub plane: Plane,
    /// Where it came from, for messages: a file name, or "frame N of clip.mp4".
    pub origin: String,
}
