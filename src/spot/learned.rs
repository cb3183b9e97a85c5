//! A per-pixel picture of the still screen, learned while the spot moves over it.
//!
//! The screen (ruling, print, uneven paper) does not move; the spot does. Every tracked frame, the
//! pixels near the spot but outside its reach are folded into a running mean, so that once the spot
//! has uncovered a place, the screen's own pattern there is known and can be taken away before the
//! spot is measured on top of it. A plane fitted to the ring around the spot still absorbs changes of
//! room light. Memory is one value and one count per pixel, independent of the run's length.

use super::view::{Img, Pixel, Rect};
use crate::units::PixelPoint;

/// Frames a pixel must have been seen without the spot before its learned value is used.
pub(crate) const MIN_SEEN: u16 = 8;
/// Longest averaging memory, frames: after this the mean follows slow light changes as an
/// exponentially weighted average of weight 1 / MAX_SEEN.
const MAX_SEEN: u16 = 32;

/// Learned screen values, full-frame, row-major.
#[derive(Debug, Clone, Default)]
pub(crate) struct ScreenModel {
    w: usize,
    h: usize,
    mean: Vec<f32>,
    seen: Vec<u16>,
}

impl ScreenModel {
    /// Forget everything (and size the model for a `w` x `h` image).
    pub fn reset(&mut self, w: usize, h: usize) {
        self.w = w;
        self.h = h;
        self.mean.clear();
        self.seen.clear();
    }

    /// The learned value at pixel (x, y).
    #[inline]
    pub fn at(&self, x: usize, y: usize) -> f64 {
        self.mean[y * self.w + x] as f64
    }

    /// Whether every pixel of the square of half-size `half` around (cx, cy) inside `rect` has been
    /// seen often enough.
    pub fn covers(&self, rect: &Rect, cx: usize, cy: usize, half: usize) -> bool {
        if self.seen.is_empty() {
            return false;
        }
        let Some(win) = rect.around(cx as f64, cy as f64, half) else {
            return false;
        };
        (win.y0..win.y1).all(|y| {
            self.seen[y * self.w + win.x0..y * self.w + win.x1]
                .iter()
                .all(|&n| n >= MIN_SEEN)
        })
    }

    /// Fold in the pixels of `img` within Chebyshev distance `half` of `spot` but further than
    /// `reach` from it (clipped pixels left out).
    pub fn learn<P: Pixel>(
        &mut self,
        img: &Img<P>,
        rect: &Rect,
        spot: PixelPoint,
        reach: usize,
        half: usize,
    ) {
        if img.w != self.w || img.h != self.h {
            self.reset(img.w, img.h);
        }
        if self.seen.is_empty() {
            self.mean = vec![0.0; self.w * self.h];
            self.seen = vec![0; self.w * self.h];
        }
        let Some(win) = rect.around(spot.x, spot.y, half) else {
            return;
        };
        // The excluded square around the spot, as a column range per row.
        let (cx, cy) = (spot.x.round(), spot.y.round());
        let r = reach as f64;
        let skip_x0 = (cx - r).max(0.0) as usize;
        let skip_x1 = ((cx + r).max(-1.0) + 1.0) as usize;
        for y in win.y0..win.y1 {
            let row = img.row(y, win.x0, win.x1);
            let base = y * self.w + win.x0;
            let mean = &mut self.mean[base..base + row.len()];
            let seen = &mut self.seen[base..base + row.len()];
            let near_row = (y as f64 - cy).abs() <= r;
            let (a, b) = if near_row {
                (
                    skip_x0.clamp(win.x0, win.x1) - win.x0,
                    skip_x1.clamp(win.x0, win.x1) - win.x0,
                )
            } else {
                (row.len(), row.len())
            };
            for part in [0..a, b..row.len()] {
                fold_row(
                    img,
                    &row[part.clone()],
                    &mut mean[part.clone()],
                    &mut seen[part],
                );
            }
        }
    }
}

/// Fold one row of pixels into their running means and counts; clipped pixels are left as they were.
///
/// Written as two plain loops over short chunks, without a branch or a table look-up, so the
/// compiler can work on several pixels at once: the first updates the counts and gives each pixel
/// its weight, `1.0 / k as f32` (the correctly rounded reciprocal, the value a table of reciprocals
/// would hold) or 0 for a clipped pixel; the second moves each mean by its weight. A clipped pixel's
/// mean moves by an exact zero, so the means are the same to the bit as a pixel-by-pixel update.
#[inline(always)]
fn fold_row<P: Pixel>(img: &Img<P>, row: &[P], mean: &mut [f32], seen: &mut [u16]) {
    const CHUNK: usize = 64;
    let mut weight = [0.0f32; CHUNK];
    for ((r, m), n) in row
        .chunks(CHUNK)
        .zip(mean.chunks_mut(CHUNK))
        .zip(seen.chunks_mut(CHUNK))
    {
        for ((v, n), w) in r.iter().zip(n.iter_mut()).zip(weight.iter_mut()) {
            let keep = !img.clipped(v.value());
            let k = (*n + 1).min(MAX_SEEN);
            *n = if keep { k } else { *n };
            *w = if keep { 1.0 / f32::from(k) } else { 0.0 };
        }
        for ((v, m), w) in r.iter().zip(m.iter_mut()).zip(&weight) {
            *m += (f32::from(v.value()) - *m) * w;
        }
    }
}
