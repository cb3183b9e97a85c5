//! One picture from any source: its index, its time, and one pixel plane (a single colour channel or luma).
//!
//! Sources reduce colour images to a plane as they read them (see [`Channel`]), so every later stage sees
//! plain intensities. A plane stores its pixels at the depth they were read at ([`Pixels`]): 8-bit
//! sources stay 8-bit, so a frame is never widened or copied on its way to the spot finder, and 16-bit
//! images keep 16 bits. Every reader sees values as `u16` whatever the storage; `white` is the value a
//! clipped pixel has (255 for 8-bit data).

use crate::units::{PixelPoint, Seconds};
use ndarray::{Array2, Ix2};
use serde::{Deserialize, Serialize};
use std::borrow::Cow;

/// A rectangle of the image, in whole pixels: a region of interest, or the part of each picture a
/// source delivers.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct Roi {
    pub x: usize,
    pub y: usize,
    pub width: usize,
    pub height: usize,
}

impl Roi {
    /// Whether the rectangle is non-empty and lies wholly inside a `width` x `height` image.
    /// (The finder itself quietly cuts an ROI to the image; callers use this to refuse bad input.)
    pub fn fits_in(&self, width: usize, height: usize) -> bool {
        self.width > 0
            && self.height > 0
            && self.x.checked_add(self.width).is_some_and(|e| e <= width)
            && self.y.checked_add(self.height).is_some_and(|e| e <= height)
    }

    /// A point of a plane cut to this rectangle, in the coordinates of the whole picture.
    pub fn to_picture(&self, p: PixelPoint) -> PixelPoint {
        PixelPoint {
            x: p.x + self.x as f64,
            y: p.y + self.y as f64,
        }
    }
}

impl std::str::FromStr for Roi {
    type Err = String;

    /// `X,Y,W,H` in whole pixels, with W and H above zero.
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let v: Vec<&str> = s.split(',').map(str::trim).collect();
        let nums: Option<Vec<usize>> = v.iter().map(|x| x.parse().ok()).collect();
        match nums.as_deref() {
            Some(&[x, y, width, height]) if width > 0 && height > 0 => Ok(Roi {
                x,
                y,
                width,
                height,
            }),
            _ => Err(format!(
                "{s:?} is not X,Y,W,H in whole pixels with W and H above zero (e.g. 100,50,640,480)"
            )),
        }
    }
}

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

    /// Reduce one 8-bit RGB pixel to this channel's 8-bit value.
    #[inline]
    pub fn from_rgb8(self, r: u8, g: u8, b: u8) -> u8 {
        // The weights sum to 1, so the result of 8-bit inputs never exceeds 255 and narrows exactly.
        self.from_rgb(r.into(), g.into(), b.into()) as u8
    }
}

/// The pixel storage of a [`Plane`], indexed `[(row, column)]` = `[(y, x)]`. Equality here compares the
/// storage as well as the values; planes compare by value alone.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Pixels {
    /// 8-bit data, kept as read.
    Eight(Array2<u8>),
    /// Data deeper than 8 bits (16-bit images, or any plane built from `u16` values).
    Sixteen(Array2<u16>),
    /// 8-bit studio-range luma (ITU-R BT.601: black 16, white 235) as a video decoder gives it,
    /// kept as decoded and widened to full range 0–255 ([`studio_to_full`]) whenever it is read, so
    /// only the pixels actually looked at pay for the widening.
    Studio(Array2<u8>),
}

/// Widen one studio-range luma sample (16–235) to full range: `round((y - 16) * 255 / 219)`,
/// clamped to 0–255, as a decoder's gray output does (ITU-R BT.601).
///
/// With `s = max(y - 16, 0)`, the result is `min(s + (36 s + 109) / 219, 255)` (since
/// 255 = 219 + 36), and the division is a multiply by `M = ceil(2^23 / 219) = 38305` and a shift.
/// For `t = 36 s + 109 <= 8713` this is exact: `t M / 2^23` exceeds `t / 219` by
/// `t (219 M - 2^23) / (219 * 2^23) < 1 / 219`, less than the gap from any fraction `k / 219` to the
/// next whole number. Every step stays within 16 bits, so loops over it vectorise.
#[inline(always)]
pub fn studio_to_full(y: u8) -> u8 {
    const M: u32 = 38_305;
    let s = u16::from(y.saturating_sub(16));
    let t = s * 36 + 109;
    let high = ((u32::from(t) * M) >> 16) as u16;
    (s + (high >> 7)).min(255) as u8
}

/// A buffer handed to [`Plane::from_u8_vec`] whose length is not width x height. The buffer comes back
/// with the error ([`PlaneSizeError::into_bytes`]), so a caller recycling buffers does not lose it.
#[derive(Clone, PartialEq, Eq, thiserror::Error)]
#[error("a {width}x{height} plane cannot be made from {} bytes", .bytes.len())]
pub struct PlaneSizeError {
    pub width: usize,
    pub height: usize,
    bytes: Vec<u8>,
}

impl PlaneSizeError {
    /// Length of the rejected buffer.
    pub fn len(&self) -> usize {
        self.bytes.len()
    }

    /// Whether the rejected buffer was empty.
    pub fn is_empty(&self) -> bool {
        self.bytes.is_empty()
    }

    /// The rejected buffer, for reuse.
    pub fn into_bytes(self) -> Vec<u8> {
        self.bytes
    }
}

impl std::fmt::Debug for PlaneSizeError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        // The buffer may be megabytes long; its length is what matters.
        f.debug_struct("PlaneSizeError")
            .field("width", &self.width)
            .field("height", &self.height)
            .field("len", &self.bytes.len())
            .finish()
    }
}

/// A single-channel image of `width()` x `height()` pixels.
///
/// Two planes are equal when they have the same size, white level and pixel values, whichever
/// storage holds them.
#[derive(Debug, Clone)]
pub struct Plane {
    pixels: Pixels,
    /// The value of a clipped (saturated) pixel: 255 for 8-bit data, 65535 for 16-bit.
    pub white: u16,
}

impl Plane {
    /// A plane stored as 16-bit values.
    pub fn new(pixels: Array2<u16>, white: u16) -> Self {
        Self {
            pixels: Pixels::Sixteen(pixels),
            white,
        }
    }

    /// An 8-bit plane (white 255) from an array indexed `[(y, x)]`.
    pub fn from_u8_array(pixels: Array2<u8>) -> Self {
        Self {
            pixels: Pixels::Eight(pixels),
            white: 255,
        }
    }

    /// An 8-bit plane (white 255) that takes over row-major `bytes` without copying them.
    ///
    /// Fails, giving the buffer back, when `bytes` does not hold exactly `width * height` values.
    pub fn from_u8_vec(
        width: usize,
        height: usize,
        bytes: Vec<u8>,
    ) -> Result<Self, PlaneSizeError> {
        if width.checked_mul(height) != Some(bytes.len()) {
            return Err(PlaneSizeError {
                width,
                height,
                bytes,
            });
        }
        match Array2::from_shape_vec((height, width), bytes) {
            Ok(a) => Ok(Self::from_u8_array(a)),
            // Not reached: the length matches, and a Vec never holds more than isize::MAX values,
            // which is all ndarray checks besides.
            Err(_) => Err(PlaneSizeError {
                width,
                height,
                bytes: Vec::new(),
            }),
        }
    }

    /// A plane of studio-range luma (see [`Pixels::Studio`]) that takes over row-major `bytes`
    /// without copying or widening them; it reads as full range, white 255.
    ///
    /// Fails, giving the buffer back, when `bytes` does not hold exactly `width * height` values.
    pub fn from_studio_luma_vec(
        width: usize,
        height: usize,
        bytes: Vec<u8>,
    ) -> Result<Self, PlaneSizeError> {
        let plane = Self::from_u8_vec(width, height, bytes)?;
        Ok(match plane.pixels {
            Pixels::Eight(a) => Self {
                pixels: Pixels::Studio(a),
                white: 255,
            },
            other => Self {
                pixels: other,
                white: 255,
            },
        })
    }

    /// An 8-bit plane (white 255) copied from row-major `bytes`.
    ///
    /// # Panics
    /// When `bytes` does not hold exactly `width * height` values; callers size the buffer from the
    /// same dimensions. Use [`Plane::from_u8_vec`] to get an error instead.
    pub fn from_u8(width: usize, height: usize, bytes: &[u8]) -> Self {
        match Self::from_u8_vec(width, height, bytes.to_vec()) {
            Ok(p) => p,
            Err(e) => panic!("{e}"),
        }
    }

    /// The 8-bit row-major buffer back (as stored), for reuse; `None` when the plane is 16-bit or its
    /// storage is not one standard-layout block.
    pub fn into_u8_vec(self) -> Option<Vec<u8>> {
        match self.pixels {
            Pixels::Eight(a) | Pixels::Studio(a) if a.is_standard_layout() => {
                let n = a.len();
                let (v, offset) = a.into_raw_vec_and_offset();
                (offset.unwrap_or(0) == 0 && v.len() == n).then_some(v)
            }
            _ => None,
        }
    }

    /// The storage, for code that works on each pixel type directly.
    pub fn pixels(&self) -> &Pixels {
        &self.pixels
    }

    /// The storage, taken out of the plane.
    pub fn into_pixels(self) -> Pixels {
        self.pixels
    }

    pub fn width(&self) -> usize {
        match &self.pixels {
            Pixels::Eight(a) | Pixels::Studio(a) => a.ncols(),
            Pixels::Sixteen(a) => a.ncols(),
        }
    }

    pub fn height(&self) -> usize {
        match &self.pixels {
            Pixels::Eight(a) | Pixels::Studio(a) => a.nrows(),
            Pixels::Sixteen(a) => a.nrows(),
        }
    }

    /// The value at column `x`, row `y`; `None` outside the plane.
    pub fn get(&self, x: usize, y: usize) -> Option<u16> {
        match &self.pixels {
            Pixels::Eight(a) => a.get((y, x)).map(|&v| v.into()),
            Pixels::Sixteen(a) => a.get((y, x)).copied(),
            Pixels::Studio(a) => a.get((y, x)).map(|&v| studio_to_full(v).into()),
        }
    }

    /// Every value, row by row.
    pub fn values(&self) -> Values<'_> {
        Values(match &self.pixels {
            Pixels::Eight(a) => ValuesOf::Eight(a.iter()),
            Pixels::Sixteen(a) => ValuesOf::Sixteen(a.iter()),
            Pixels::Studio(a) => ValuesOf::Studio(a.iter()),
        })
    }

    /// The pixels as 16-bit values: borrowed when stored so, widened into a new array otherwise.
    pub fn to_u16(&self) -> Cow<'_, Array2<u16>> {
        match &self.pixels {
            Pixels::Eight(a) => Cow::Owned(a.mapv(u16::from)),
            Pixels::Sixteen(a) => Cow::Borrowed(a),
            Pixels::Studio(a) => Cow::Owned(a.mapv(|v| studio_to_full(v).into())),
        }
    }
}

impl PartialEq for Plane {
    fn eq(&self, other: &Self) -> bool {
        if self.white != other.white
            || self.width() != other.width()
            || self.height() != other.height()
        {
            return false;
        }
        match (&self.pixels, &other.pixels) {
            (Pixels::Eight(a), Pixels::Eight(b)) => a == b,
            (Pixels::Sixteen(a), Pixels::Sixteen(b)) => a == b,
            _ => self.values().eq(other.values()),
        }
    }
}

/// Iterator over a plane's values as `u16`, row by row (see [`Plane::values`]).
#[derive(Debug, Clone)]
pub struct Values<'a>(ValuesOf<'a>);

#[derive(Debug, Clone)]
enum ValuesOf<'a> {
    Eight(ndarray::iter::Iter<'a, u8, Ix2>),
    Sixteen(ndarray::iter::Iter<'a, u16, Ix2>),
    Studio(ndarray::iter::Iter<'a, u8, Ix2>),
}

impl Iterator for Values<'_> {
    type Item = u16;

    #[inline]
    fn next(&mut self) -> Option<u16> {
        match &mut self.0 {
            ValuesOf::Eight(i) => i.next().map(|&v| v.into()),
            ValuesOf::Sixteen(i) => i.next().copied(),
            ValuesOf::Studio(i) => i.next().map(|&v| studio_to_full(v).into()),
        }
    }

    fn size_hint(&self) -> (usize, Option<usize>) {
        match &self.0 {
            ValuesOf::Eight(i) | ValuesOf::Studio(i) => i.size_hint(),
            ValuesOf::Sixteen(i) => i.size_hint(),
        }
    }

    // Whole-plane passes (sums, collects) go through `fold`; forwarding it keeps the storage test out
    // of the per-pixel loop.
    fn fold<B, F: FnMut(B, u16) -> B>(self, init: B, mut f: F) -> B {
        match self.0 {
            ValuesOf::Eight(i) => i.fold(init, |acc, &v| f(acc, v.into())),
            ValuesOf::Sixteen(i) => i.fold(init, |acc, &v| f(acc, v)),
            ValuesOf::Studio(i) => i.fold(init, |acc, &v| f(acc, studio_to_full(v).into())),
        }
    }
}

impl ExactSizeIterator for Values<'_> {}

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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn roi_parses_four_whole_pixel_numbers_and_refuses_anything_else() {
        let r: Roi = " 100, 50,640 ,480".parse().unwrap();
        assert_eq!((r.x, r.y, r.width, r.height), (100, 50, 640, 480));
        for bad in [
            "1,2,3",
            "1,2,0,4",
            "1,2,3,0",
            "1,2,3,4,5",
            "-1,2,3,4",
            "1.5,2,3,4",
            "",
        ] {
            let e = bad.parse::<Roi>().unwrap_err();
            assert!(e.contains("X,Y,W,H") && e.contains(&format!("{bad:?}")));
        }
    }

    #[test]
    fn eight_bit_buffer_is_kept_and_given_back() {
        let bytes: Vec<u8> = (0..12).collect();
        let ptr = bytes.as_ptr();
        let p = Plane::from_u8_vec(4, 3, bytes).unwrap();
        assert_eq!((p.width(), p.height(), p.white), (4, 3, 255));
        assert!(matches!(p.pixels(), Pixels::Eight(_)));
        assert_eq!(p.get(1, 2), Some(9));
        assert_eq!(p.get(4, 0), None);
        assert_eq!(p.get(0, 3), None);
        let back = p.into_u8_vec().unwrap();
        // The same allocation, not a copy.
        assert_eq!(back.as_ptr(), ptr);
        assert_eq!(back, (0..12).collect::<Vec<u8>>());
    }

    #[test]
    fn wrong_length_is_an_error_that_returns_the_buffer() {
        let e = Plane::from_u8_vec(4, 3, vec![7; 11]).unwrap_err();
        assert_eq!((e.width, e.height, e.len()), (4, 3, 11));
        assert!(e.to_string().contains("4x3"), "{e}");
        assert_eq!(e.into_bytes(), vec![7; 11]);
        let e = Plane::from_u8_vec(usize::MAX, 2, vec![0; 2]).unwrap_err();
        assert_eq!(e.len(), 2);
    }

    #[test]
    fn sixteen_bit_and_non_standard_planes_give_no_buffer() {
        let p = Plane::new(Array2::from_elem((2, 2), 3u16), 4095);
        assert!(p.into_u8_vec().is_none());
        let t = Array2::from_shape_vec((2, 3), vec![1u8, 2, 3, 4, 5, 6])
            .unwrap()
            .reversed_axes();
        let p = Plane::from_u8_array(t);
        assert_eq!((p.width(), p.height()), (2, 3));
        assert_eq!(p.get(1, 0), Some(4));
        assert_eq!(p.values().collect::<Vec<_>>(), vec![1, 4, 2, 5, 3, 6]);
        assert!(p.into_u8_vec().is_none());
    }

    #[test]
    fn storage_does_not_change_values_or_equality() {
        let eight = Plane::from_u8(3, 2, &[0, 1, 2, 100, 254, 255]);
        let sixteen = Plane::new(
            Array2::from_shape_vec((2, 3), vec![0u16, 1, 2, 100, 254, 255]).unwrap(),
            255,
        );
        assert_eq!(eight, sixteen);
        assert_eq!(eight.values().len(), 6);
        assert_eq!(
            eight.values().collect::<Vec<_>>(),
            sixteen.values().collect::<Vec<_>>()
        );
        assert_eq!(eight.values().map(u32::from).sum::<u32>(), 612);
        assert_eq!(eight.to_u16().as_ref(), sixteen.to_u16().as_ref());
        assert!(matches!(sixteen.to_u16(), Cow::Borrowed(_)));
        let other = Plane::from_u8(3, 2, &[0, 1, 2, 100, 254, 254]);
        assert_ne!(eight, other);
        let mut dimmer = sixteen.clone();
        dimmer.white = 4095;
        assert_ne!(eight, dimmer);
        let reshaped = Plane::from_u8(2, 3, &[0, 1, 2, 100, 254, 255]);
        assert_ne!(eight, reshaped);
    }

    #[test]
    fn eight_bit_channels_match_the_wide_reduction() {
        for ch in [Channel::Red, Channel::Green, Channel::Blue, Channel::Luma] {
            for (r, g, b) in [
                (255u8, 255u8, 255u8),
                (200, 10, 20),
                (0, 0, 0),
                (17, 250, 3),
            ] {
                assert_eq!(
                    u16::from(ch.from_rgb8(r, g, b)),
                    ch.from_rgb(r.into(), g.into(), b.into())
                );
            }
        }
    }
}
