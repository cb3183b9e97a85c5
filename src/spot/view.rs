//! A borrowed, row-major view of a plane and the rectangle the finder may look in.
//!
//! The view is generic over the stored pixel type ([`Pixel`]: `u8` or `u16`), so the finder runs on
//! a plane's own storage without widening it; each loop is compiled once per type.

use super::Roi;

mod sealed {
    pub trait Sealed {}
    impl Sealed for u8 {}
    impl Sealed for u16 {}
    impl Sealed for super::StudioLuma {}
}

/// One studio-range luma sample, read as full range (see [`crate::frame::Pixels::Studio`]).
#[derive(Debug, Clone, Copy)]
#[repr(transparent)]
pub(crate) struct StudioLuma(pub u8);

impl StudioLuma {
    /// View stored studio-range bytes as samples, without copying.
    pub fn slice(bytes: &[u8]) -> &[StudioLuma] {
        // SAFETY: `StudioLuma` is `repr(transparent)` over `u8`, so it has the same size, alignment
        // and validity; the new slice covers exactly the same memory for the same lifetime.
        unsafe { std::slice::from_raw_parts(bytes.as_ptr().cast::<StudioLuma>(), bytes.len()) }
    }
}

impl Pixel for StudioLuma {
    #[inline(always)]
    fn value(self) -> u16 {
        crate::frame::studio_to_full(self.0).into()
    }
}

/// A stored pixel type the finder can read: `u8`, `u16` or studio-range luma.
pub(crate) trait Pixel: Copy + sealed::Sealed {
    /// The value as a 16-bit number.
    fn value(self) -> u16;
}

impl Pixel for u8 {
    #[inline(always)]
    fn value(self) -> u16 {
        self as u16
    }
}

impl Pixel for u16 {
    #[inline(always)]
    fn value(self) -> u16 {
        self
    }
}

/// Pixels of a plane as one row-major slice.
pub(crate) struct Img<'a, P: Pixel> {
    pub data: &'a [P],
    pub w: usize,
    pub h: usize,
    pub white: u16,
}

impl<P: Pixel> Img<'_, P> {
    #[inline]
    pub fn get(&self, x: usize, y: usize) -> u16 {
        self.data[y * self.w + x].value()
    }

    #[inline]
    pub fn row(&self, y: usize, x0: usize, x1: usize) -> &[P] {
        &self.data[y * self.w + x0..y * self.w + x1]
    }

    /// A pixel value that is clipped at either end of the range.
    #[inline]
    pub fn clipped(&self, v: u16) -> bool {
        v >= self.white || v == 0
    }
}

/// A half-open pixel rectangle `[x0, x1) x [y0, y1)`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Rect {
    pub x0: usize,
    pub y0: usize,
    pub x1: usize,
    pub y1: usize,
}

impl Rect {
    /// The part of the image the finder may use: the ROI cut to the image, or the whole image.
    /// `None` when nothing is left.
    pub fn for_image(w: usize, h: usize, roi: Option<Roi>) -> Option<Rect> {
        let r = match roi {
            None => Rect {
                x0: 0,
                y0: 0,
                x1: w,
                y1: h,
            },
            Some(r) => Rect {
                x0: r.x.min(w),
                y0: r.y.min(h),
                x1: r.x.saturating_add(r.width).min(w),
                y1: r.y.saturating_add(r.height).min(h),
            },
        };
        (r.x1 > r.x0 && r.y1 > r.y0).then_some(r)
    }

    pub fn width(&self) -> usize {
        self.x1 - self.x0
    }

    pub fn height(&self) -> usize {
        self.y1 - self.y0
    }

    /// The square of half-size `half` around (cx, cy), cut to this rectangle.
    pub fn around(&self, cx: f64, cy: f64, half: usize) -> Option<Rect> {
        let h = half as f64;
        let x0 = (cx - h).round().max(self.x0 as f64) as usize;
        let y0 = (cy - h).round().max(self.y0 as f64) as usize;
        let x1 = ((cx + h).round() + 1.0).min(self.x1 as f64).max(0.0) as usize;
        let y1 = ((cy + h).round() + 1.0).min(self.y1 as f64).max(0.0) as usize;
        (x1 > x0 && y1 > y0).then_some(Rect { x0, y0, x1, y1 })
    }

    pub fn contains(&self, x: f64, y: f64) -> bool {
        x >= self.x0 as f64 - 0.5
            && x < self.x1 as f64 - 0.5
            && y >= self.y0 as f64 - 0.5
            && y < self.y1 as f64 - 0.5
    }
}

/// The median of `v` (reordered in place); `None` when empty.
pub(crate) fn median(v: &mut [f64]) -> Option<f64> {
    if v.is_empty() {
        return None;
    }
    let mid = v.len() / 2;
    let (_, m, _) = v.select_nth_unstable_by(mid, f64::total_cmp);
    Some(*m)
}

/// Median and normal-consistent standard deviation from the median absolute deviation
/// (1.4826 x MAD estimates sigma for Gaussian data; common practice, no source).
pub(crate) fn median_and_sigma(v: &mut [f64]) -> Option<(f64, f64)> {
    let m = median(v)?;
    for x in v.iter_mut() {
        *x = (*x - m).abs();
    }
    let mad = median(v)?;
    Some((m, 1.4826 * mad))
}
