//! Background-subtracted, thresholded centre of light: the starting point of the fit and the fallback
//! when a fit is not possible.

use super::background::Under;
use super::view::{Img, Pixel, Rect};

/// A centroid and how many pixels lay above half the peak.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Centroid {
    pub x: f64,
    pub y: f64,
    pub above_half: usize,
}

/// Centre of `max(v - background - threshold, 0)` over the square of half-size `half` around `centre`
/// (clipped pixels count at the white level). `None` when nothing exceeds the threshold.
pub(crate) fn weighted_centroid<P: Pixel>(
    img: &Img<P>,
    rect: &Rect,
    centre: crate::units::PixelPoint,
    half: usize,
    bg: &Under,
    threshold: f64,
    half_peak: f64,
) -> Option<Centroid> {
    let win = rect.around(centre.x, centre.y, half.max(2))?;
    let (mut sw, mut sx, mut sy) = (0.0, 0.0, 0.0);
    let mut above_half = 0usize;
    for y in win.y0..win.y1 {
        let yf = y as f64;
        for (i, v) in img
            .row(y, win.x0, win.x1)
            .iter()
            .map(|v| v.value())
            .enumerate()
        {
            let x = (win.x0 + i) as f64;
            let a = v as f64 - bg.at(win.x0 + i, y);
            if a > half_peak {
                above_half += 1;
            }
            let w = a - threshold;
            if w > 0.0 {
                sw += w;
                sx += w * x;
                sy += w * yf;
            }
        }
    }
    (sw > 0.0).then(|| Centroid {
        x: sx / sw,
        y: sy / sw,
        above_half,
    })
}
