//! Coarse search: where in a large image something bright stands out of its surroundings.
//!
//! The image (or ROI) is reduced to means of 4 x 4 blocks; each block is compared with the mean of a
//! square ring of blocks around it (so smooth room light and the ruling's average drop out), and the
//! strongest contrast wins. A second candidate well away from the first is kept, so two comparable
//! spots can be reported. One pass over the pixels plus work on a 16 times smaller grid keeps a
//! 1920 x 1080 frame within a few milliseconds.

use super::view::{median_and_sigma, Img, Pixel, Rect};

/// Side of the blocks averaged for the search, px.
pub(crate) const BLOCK: usize = 4;

/// A place where the block contrast peaks.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Candidate {
    /// Centre of the block, full-resolution pixels.
    pub x: usize,
    pub y: usize,
    /// Block mean minus ring mean, DN.
    pub contrast: f64,
}

/// The outcome of one coarse search.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Search {
    pub best: Option<Candidate>,
    pub second: Option<Candidate>,
    /// Robust standard deviation of the block contrast over the searched area, DN.
    pub noise: f64,
}

/// Ring geometry in blocks for spots up to `max_sigma_px`: (inner radius, outer radius).
pub(crate) fn ring_blocks(max_sigma_px: f64) -> (usize, usize) {
    let inner = ((2.5 * max_sigma_px) / BLOCK as f64).ceil().max(2.0) as usize;
    (inner, inner + 4)
}

/// Search `rect` of `img` for the strongest local excess of light.
pub(crate) fn coarse_search<P: Pixel>(img: &Img<P>, rect: &Rect, max_sigma_px: f64) -> Search {
    let bw = rect.width() / BLOCK;
    let bh = rect.height() / BLOCK;
    let empty = Search {
        best: None,
        second: None,
        noise: 0.0,
    };
    if bw < 3 || bh < 3 {
        return empty;
    }
    let sums = block_sums(img, rect, bw, bh);
    let sat = summed_area(&sums, bw, bh);
    let (ri, ro) = ring_blocks(max_sigma_px);
    let contrast = block_contrast(&sums, &sat, (bw, bh), (ri, ro));
    // Robust spread of the contrast from a subsample.
    let step = (contrast.len() / 20_000).max(1);
    let mut sample: Vec<f64> = contrast.iter().step_by(step).map(|&c| c as f64).collect();
    let noise = median_and_sigma(&mut sample).map(|(_, s)| s).unwrap_or(0.0);

    let to_candidate = |(i, c): (usize, f32)| Candidate {
        x: rect.x0 + (i % bw) * BLOCK + BLOCK / 2,
        y: rect.y0 + (i / bw) * BLOCK + BLOCK / 2,
        contrast: c as f64,
    };
    let Some(first) = arg_max(&contrast, bw, None, 0) else {
        return empty;
    };
    let second = arg_max(&contrast, bw, Some((first.0 % bw, first.0 / bw)), 2 * ri);
    Search {
        best: Some(to_candidate(first)),
        second: second.map(to_candidate),
        noise,
    }
}

/// Sums of the `bw` x `bh` blocks of `rect`, row by row.
#[inline]
fn block_sums<P: Pixel>(img: &Img<P>, rect: &Rect, bw: usize, bh: usize) -> Vec<u32> {
    let mut sums = vec![0u32; bw * bh];
    for by in 0..bh {
        let acc = &mut sums[by * bw..(by + 1) * bw];
        for dy in 0..BLOCK {
            let y = rect.y0 + by * BLOCK + dy;
            let row = img.row(y, rect.x0, rect.x0 + bw * BLOCK);
            for (a, chunk) in acc.iter_mut().zip(row.chunks_exact(BLOCK)) {
                *a += chunk.iter().map(|&v| u32::from(v.value())).sum::<u32>();
            }
        }
    }
    sums
}

/// Summed-area table of the block sums, (bw + 1) x (bh + 1).
#[inline]
fn summed_area(sums: &[u32], bw: usize, bh: usize) -> Vec<u64> {
    let sw = bw + 1;
    let mut sat = vec![0u64; sw * (bh + 1)];
    for by in 0..bh {
        let mut run = 0u64;
        for bx in 0..bw {
            run += sums[by * bw + bx] as u64;
            sat[(by + 1) * sw + bx + 1] = sat[by * sw + bx + 1] + run;
        }
    }
    sat
}

/// Each block's mean minus the mean of the ring of blocks between radii `ri` and `ro` around it
/// (cut to the grid; the inner square's mean where nothing of the ring is left), DN.
#[inline]
fn block_contrast(
    sums: &[u32],
    sat: &[u64],
    (bw, bh): (usize, usize),
    (ri, ro): (usize, usize),
) -> Vec<f32> {
    let sw = bw + 1;
    let box_sum = |x0: usize, y0: usize, x1: usize, y1: usize| -> (u64, usize) {
        // Inclusive-exclusive block ranges [x0, x1) x [y0, y1).
        let s = sat[y1 * sw + x1] + sat[y0 * sw + x0] - sat[y0 * sw + x1] - sat[y1 * sw + x0];
        (s, (x1 - x0) * (y1 - y0))
    };
    let per_block = (BLOCK * BLOCK) as f64;
    let mut contrast = vec![0.0f32; bw * bh];
    for by in 0..bh {
        let (oy0, oy1) = (by.saturating_sub(ro), (by + ro + 1).min(bh));
        let (iy0, iy1) = (by.saturating_sub(ri), (by + ri + 1).min(bh));
        for bx in 0..bw {
            let (ox0, ox1) = (bx.saturating_sub(ro), (bx + ro + 1).min(bw));
            let (ix0, ix1) = (bx.saturating_sub(ri), (bx + ri + 1).min(bw));
            let (so, no) = box_sum(ox0, oy0, ox1, oy1);
            let (si, ni) = box_sum(ix0, iy0, ix1, iy1);
            let n = no - ni;
            let ring = if n > 0 {
                (so - si) as f64 / (n as f64 * per_block)
            } else {
                si as f64 / (ni as f64 * per_block)
            };
            contrast[by * bw + bx] = (sums[by * bw + bx] as f64 / per_block - ring) as f32;
        }
    }
    contrast
}

/// The first largest contrast (index, value), skipping blocks within `excl` blocks of `skip`.
#[inline]
fn arg_max(
    contrast: &[f32],
    bw: usize,
    skip: Option<(usize, usize)>,
    excl: usize,
) -> Option<(usize, f32)> {
    let mut best: Option<(usize, f32)> = None;
    for (i, &c) in contrast.iter().enumerate() {
        if let Some((sx, sy)) = skip {
            let (bx, by) = (i % bw, i / bw);
            if bx.abs_diff(sx) <= excl && by.abs_diff(sy) <= excl {
                continue;
            }
        }
        if best.is_none_or(|(_, b)| c > b) {
            best = Some((i, c));
        }
    }
    best
}
