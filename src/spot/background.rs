//! The local background around the spot: a plane (level and slopes) fitted robustly to a square ring of
//! pixels just outside the spot's reach, and its slow smoothing from frame to frame.

use super::learned::ScreenModel;
use super::view::{median_and_sigma, Img, Pixel, Rect};
use crate::units::PixelPoint;
use nalgebra::{Matrix3, Vector3};

/// Smallest noise figure reported: the standard deviation of rounding to whole DN, 1/sqrt(12)
/// (uniform quantisation error; common practice, no source).
pub(crate) const QUANTISATION_SIGMA: f64 = 0.288_675_134_594_812_9;

/// Background around the spot, as a plane in image coordinates.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LocalBackground {
    /// Where the plane is anchored (the window's centre), px.
    pub centre: PixelPoint,
    /// Background level at `centre`, DN.
    pub level: f64,
    /// Slopes along x and y, DN per px.
    pub slope_x: f64,
    pub slope_y: f64,
    /// Robust standard deviation of the ring pixels about the plane, DN (noise plus screen texture).
    pub noise: f64,
}

impl LocalBackground {
    /// The background value at pixel (x, y).
    #[inline]
    pub fn at(&self, x: f64, y: f64) -> f64 {
        self.level + self.slope_x * (x - self.centre.x) + self.slope_y * (y - self.centre.y)
    }
}

/// The full background under a pixel: the fitted plane, on top of the learned screen when there is one.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Under<'a> {
    pub plane: LocalBackground,
    pub screen: Option<&'a ScreenModel>,
}

impl Under<'_> {
    #[inline]
    pub fn at(&self, x: usize, y: usize) -> f64 {
        let p = self.plane.at(x as f64, y as f64);
        match self.screen {
            Some(s) => p + s.at(x, y),
            None => p,
        }
    }
}

/// Fit the background to the ring of pixels whose Chebyshev distance from (cx, cy) lies in
/// `radius - thickness + 1 ..= radius`, inside `rect`.
///
/// Clipped pixels are left out; pixels further than three robust standard deviations from the median
/// (ruling lines, other light) are trimmed before a least-squares plane fit. `None` when fewer than
/// twelve pixels remain. With a learned `screen`, the plane is fitted to what differs from it.
pub(crate) fn ring_background<P: Pixel>(
    img: &Img<P>,
    rect: &Rect,
    (cx, cy): (usize, usize),
    radius: usize,
    thickness: usize,
    screen: Option<&ScreenModel>,
) -> Option<LocalBackground> {
    let inner = radius.saturating_sub(thickness.max(1) - 1);
    let win = rect.around(cx as f64, cy as f64, radius)?;
    let mut pts: Vec<(f64, f64, f64)> = Vec::with_capacity(8 * radius * thickness + 8);
    for y in win.y0..win.y1 {
        let dy = y.abs_diff(cy);
        let row = img.row(y, win.x0, win.x1);
        for (i, v) in row.iter().map(|v| v.value()).enumerate() {
            let x = win.x0 + i;
            let d = dy.max(x.abs_diff(cx));
            if d >= inner && d <= radius && !img.clipped(v) {
                let under = screen.map_or(0.0, |s| s.at(x, y));
                pts.push((x as f64 - cx as f64, y as f64 - cy as f64, v as f64 - under));
            }
        }
    }
    if pts.len() < 12 {
        return None;
    }
    let mut vals: Vec<f64> = pts.iter().map(|p| p.2).collect();
    let (med, sig) = median_and_sigma(&mut vals)?;
    let cut = 3.0 * sig.max(QUANTISATION_SIGMA * 2.0);
    let kept: Vec<(f64, f64, f64)> = pts
        .into_iter()
        .filter(|p| (p.2 - med).abs() <= cut)
        .collect();
    if kept.len() < 12 {
        return None;
    }
    // Normal equations of v = a + b dx + c dy.
    let mut m = Matrix3::zeros();
    let mut r = Vector3::zeros();
    for &(dx, dy, v) in &kept {
        let g = Vector3::new(1.0, dx, dy);
        m += g * g.transpose();
        r += g * v;
    }
    let sol = m.lu().solve(&r).filter(|s| s.iter().all(|v| v.is_finite()));
    let (level, sx, sy) = match sol {
        Some(s) => (s[0], s[1], s[2]),
        // A degenerate ring (e.g. one line of pixels at an image edge): fall back to the median.
        None => (med, 0.0, 0.0),
    };
    let mut res: Vec<f64> = kept
        .iter()
        .map(|&(dx, dy, v)| v - (level + sx * dx + sy * dy))
        .collect();
    let noise = median_and_sigma(&mut res)
        .map(|(_, s)| s)
        .unwrap_or(sig)
        .max(QUANTISATION_SIGMA);
    Some(LocalBackground {
        centre: PixelPoint {
            x: cx as f64,
            y: cy as f64,
        },
        level,
        slope_x: sx,
        slope_y: sy,
        noise,
    })
}

/// Exponential smoothing of the local background from frame to frame, so that slowly changing room
/// light is followed while single-frame noise is averaged out.
///
/// Each update moves the estimate a fraction `weight` of the way to the new measurement (an
/// exponentially weighted moving average; on a ramp of r DN per frame it lags by r (1 - weight) / weight,
/// a standard property of that filter). A jump larger than six noise figures, or a move of the window by
/// more than `reset_px`, restarts it from the new measurement.
#[derive(Debug, Clone, Default)]
pub(crate) struct BackgroundFollower {
    state: Option<LocalBackground>,
}

impl BackgroundFollower {
    pub fn current(&self) -> Option<LocalBackground> {
        self.state
    }

    pub fn reset(&mut self) {
        self.state = None;
    }

    pub fn update(&mut self, now: LocalBackground, weight: f64, reset_px: f64) -> LocalBackground {
        let w = weight.clamp(0.0, 1.0);
        let next = match self.state {
            Some(s) => {
                let moved = ((s.centre.x - now.centre.x).powi(2)
                    + (s.centre.y - now.centre.y).powi(2))
                .sqrt();
                // Compare at the new centre so a small move of the window is not taken for a change.
                let old_level = s.at(now.centre.x, now.centre.y);
                if moved > reset_px || (old_level - now.level).abs() > 6.0 * now.noise.max(s.noise)
                {
                    now
                } else {
                    LocalBackground {
                        centre: now.centre,
                        level: old_level + w * (now.level - old_level),
                        slope_x: s.slope_x + w * (now.slope_x - s.slope_x),
                        slope_y: s.slope_y + w * (now.slope_y - s.slope_y),
                        noise: s.noise + w * (now.noise - s.noise),
                    }
                }
            }
            None => now,
        };
        self.state = Some(next);
        next
    }
}
