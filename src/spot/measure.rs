//! From a rough seed to a subpixel position and quality figures: local background, thresholded
//! background-subtracted centroid, then a Gaussian fit over the unclipped pixels.

use super::background::{ring_background, LocalBackground, Under};
use super::centroid::weighted_centroid;
use super::fit::{fit_gaussian, Gaussian, Sample};
use super::learned::ScreenModel;
use super::view::{Img, Pixel, Rect};
use super::{SpotConfig, SpotFix, SpotStatus};
use crate::units::PixelPoint;

/// A measured spot and the background it was measured against.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Measurement {
    pub fix: SpotFix,
    pub background: LocalBackground,
}

/// The brightest 3 x 3 neighbourhood within `half` px of (x, y): a starting point only.
pub(crate) fn brightest_patch<P: Pixel>(
    img: &Img<P>,
    rect: &Rect,
    x: usize,
    y: usize,
    half: usize,
) -> (usize, usize) {
    let Some(win) = rect.around(x as f64, y as f64, half) else {
        return (x, y);
    };
    let mut best = (x.clamp(win.x0, win.x1 - 1), y.clamp(win.y0, win.y1 - 1));
    let mut best_sum = 0u32;
    // Separable sums: across each row first (for the window's columns, over the rows it touches),
    // then down each column. Neighbourhoods are cut to `rect`, as the whole search is.
    let (rx0, rx1) = (
        win.x0.saturating_sub(1).max(rect.x0),
        (win.x1 + 1).min(rect.x1),
    );
    let (ry0, ry1) = (
        win.y0.saturating_sub(1).max(rect.y0),
        (win.y1 + 1).min(rect.y1),
    );
    let w = win.width();
    let mut across = vec![0u32; (ry1 - ry0) * w];
    for (yy, sums) in (ry0..ry1).zip(across.chunks_exact_mut(w)) {
        let row = img.row(yy, rx0, rx1);
        for (xx, s) in (win.x0..win.x1).zip(sums.iter_mut()) {
            let (a, b) = (xx.saturating_sub(1).max(rx0), (xx + 2).min(rx1));
            *s = row[a - rx0..b - rx0].iter().map(|v| v.value() as u32).sum();
        }
    }
    for yy in win.y0..win.y1 {
        let (a, b) = (yy.saturating_sub(1).max(ry0), (yy + 2).min(ry1));
        for (i, xx) in (win.x0..win.x1).enumerate() {
            let s: u32 = (a..b).map(|ny| across[(ny - ry0) * w + i]).sum();
            if s > best_sum {
                best_sum = s;
                best = (xx, yy);
            }
        }
    }
    best
}

/// Measure the spot seeded at pixel (sx, sy). `prior` replaces the freshly measured background when
/// the caller has a better (smoothed) one; `filter` turns the fresh one into that better one. When
/// `screen` has learned every pixel within reach of the seed, the screen's pattern is taken away first
/// and the ring plane only models what changed since (the filter is then not used).
pub(crate) fn measure<P: Pixel>(
    img: &Img<P>,
    rect: &Rect,
    (sx, sy): (usize, usize),
    config: &SpotConfig,
    screen: Option<&ScreenModel>,
    filter: &mut dyn FnMut(LocalBackground) -> LocalBackground,
) -> Option<Measurement> {
    let reach = config.reach_px();
    let screen = screen.filter(|s| s.covers(rect, sx, sy, reach));
    let fresh = ring_background(img, rect, (sx, sy), reach, 3, screen)?;
    let bg = if screen.is_some() {
        fresh
    } else {
        filter(fresh)
    };
    let under = Under { plane: bg, screen };
    let noise = bg.noise;

    let peak_obs = observed_peak(img, rect, (sx, sy), &under);
    if peak_obs <= 0.0 {
        return None;
    }
    // Centroid of the light above a threshold, recentred a few times.
    let threshold = (3.0 * noise).max(0.2 * peak_obs);
    let (centre, half_max_px) =
        recentre(img, rect, (sx, sy), reach - 3, &under, threshold, peak_obs)?;
    // Width from the area above half the observed peak: pi r^2 with r = sigma sqrt(2 ln 2).
    let sigma0 = ((half_max_px.max(1) as f64 / std::f64::consts::PI).sqrt()
        / (2.0 * std::f64::consts::LN_2).sqrt())
    .clamp(0.6, config.max_sigma_px);

    // Fit window and samples (clipped pixels censored, slopes removed).
    // Beyond 3 sigma a pixel holds about 0.1 % of the information on the centre (the tail of
    // r^2 exp(-r^2 / sigma^2)), so the window stops there.
    let fit_half = ((3.0 * sigma0).ceil() as usize).clamp(4, reach);
    let win = rect.around(centre.x, centre.y, fit_half)?;
    let w = window_samples(img, &win, &under, bg.level);
    let amp0 = if w.saturated_px > 0 {
        1.5 * peak_obs
    } else {
        peak_obs
    };
    let start = Gaussian {
        x0: centre.x,
        y0: centre.y,
        amp: amp0,
        offset: bg.level,
        sigma: sigma0,
    };
    let (position, amp, sigma) = fit_or_centroid(&w.samples, start, &win, config, peak_obs);
    let fix = SpotFix {
        position: Some(position),
        peak: amp,
        integral: w.sum_above,
        // RMS radius of an isotropic Gaussian: sqrt(<x^2 + y^2>) = sqrt(2) sigma.
        width_px: std::f64::consts::SQRT_2 * sigma,
        saturated_px: w.saturated_px,
        snr: amp / noise,
        status: if w.saturated_px > 0 {
            SpotStatus::Saturated
        } else {
            SpotStatus::Ok
        },
    };
    Some(Measurement {
        fix,
        background: bg,
    })
}

/// Observed peak above the background within 2 px of the seed (0 when none is above it).
#[inline]
fn observed_peak<P: Pixel>(
    img: &Img<P>,
    rect: &Rect,
    (sx, sy): (usize, usize),
    under: &Under,
) -> f64 {
    let mut peak_obs = 0.0f64;
    if let Some(core) = rect.around(sx as f64, sy as f64, 2) {
        for y in core.y0..core.y1 {
            for x in core.x0..core.x1 {
                let v = img.get(x, y);
                peak_obs = peak_obs.max(v as f64 - under.at(x, y));
            }
        }
    }
    peak_obs
}

/// The thresholded centroid within `half` px, recentred up to four times (until it moves less than
/// 0.01 px), and the number of pixels above half the observed peak around it.
#[inline]
fn recentre<P: Pixel>(
    img: &Img<P>,
    rect: &Rect,
    (sx, sy): (usize, usize),
    half: usize,
    under: &Under,
    threshold: f64,
    peak_obs: f64,
) -> Option<(PixelPoint, usize)> {
    let mut centre = PixelPoint {
        x: sx as f64,
        y: sy as f64,
    };
    let mut half_max_px = 0usize;
    for _ in 0..4 {
        let c = weighted_centroid(img, rect, centre, half, under, threshold, 0.5 * peak_obs)?;
        let moved = (c.x - centre.x).abs().max((c.y - centre.y).abs());
        centre = PixelPoint { x: c.x, y: c.y };
        half_max_px = c.above_half;
        if moved < 0.01 {
            break;
        }
    }
    Some((centre, half_max_px))
}

/// The fitted Gaussian's centre, amplitude and width when fitting is on and the fit stays near the
/// centroid (`start`'s centre) with a plausible width; else the centroid, the observed peak and the
/// width from the area above half of it (`start`'s sigma).
#[inline]
fn fit_or_centroid(
    samples: &[Sample],
    start: Gaussian,
    win: &Rect,
    config: &SpotConfig,
    peak_obs: f64,
) -> (PixelPoint, f64, f64) {
    let (centre, sigma0) = (
        PixelPoint {
            x: start.x0,
            y: start.y0,
        },
        start.sigma,
    );
    let fitted = if config.fit {
        fit_gaussian(samples, start).filter(|g| {
            (g.x0 - centre.x).abs().max((g.y0 - centre.y).abs()) < sigma0.max(1.5)
                && g.sigma > 0.3
                && g.sigma < 2.0 * config.max_sigma_px
                && win.contains(g.x0, g.y0)
        })
    } else {
        None
    };
    match fitted {
        Some(g) => (PixelPoint { x: g.x0, y: g.y0 }, g.amp, g.sigma),
        None => (centre, peak_obs, sigma0),
    }
}

/// What the fit window holds: the unclipped pixels as fit samples (the background's slopes and the
/// learned screen taken away, its level kept), the count of pixels at white, and the summed light
/// above the background.
struct Window {
    samples: Vec<Sample>,
    saturated_px: u32,
    sum_above: f64,
}

#[inline]
fn window_samples<P: Pixel>(img: &Img<P>, win: &Rect, under: &Under, level: f64) -> Window {
    let mut samples = Vec::with_capacity(win.width() * win.height());
    let mut saturated_px = 0u32;
    let mut sum_above = 0.0;
    for y in win.y0..win.y1 {
        for (i, v) in img
            .row(y, win.x0, win.x1)
            .iter()
            .map(|v| v.value())
            .enumerate()
        {
            let x = (win.x0 + i) as f64;
            let yf = y as f64;
            let b = under.at(win.x0 + i, y);
            sum_above += v as f64 - b;
            if v >= img.white {
                saturated_px += 1;
            }
            if !img.clipped(v) {
                samples.push(Sample {
                    x,
                    y: yf,
                    v: v as f64 - (b - level),
                });
            }
        }
    }
    Window {
        samples,
        saturated_px,
        sum_above,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};

    /// The 3 x 3 sums taken one neighbourhood at a time, as the search is defined.
    fn brightest_patch_by_definition(
        img: &Img<u8>,
        rect: &Rect,
        x: usize,
        y: usize,
        half: usize,
    ) -> (usize, usize) {
        let Some(win) = rect.around(x as f64, y as f64, half) else {
            return (x, y);
        };
        let mut best = (x.clamp(win.x0, win.x1 - 1), y.clamp(win.y0, win.y1 - 1));
        let mut best_sum = 0u32;
        for yy in win.y0..win.y1 {
            for xx in win.x0..win.x1 {
                let mut s = 0u32;
                for ny in yy.saturating_sub(1).max(rect.y0)..(yy + 2).min(rect.y1) {
                    for nx in xx.saturating_sub(1).max(rect.x0)..(xx + 2).min(rect.x1) {
                        s += img.get(nx, ny) as u32;
                    }
                }
                if s > best_sum {
                    best_sum = s;
                    best = (xx, yy);
                }
            }
        }
        best
    }

    #[test]
    fn separable_brightest_patch_is_the_neighbourhood_search() {
        let mut rng = rand::rngs::StdRng::seed_from_u64(7);
        let (w, h) = (40, 30);
        for case in 0..400 {
            // Coarse values make ties common, so the first-found rule is exercised too.
            let data: Vec<u8> = (0..w * h).map(|_| rng.random_range(0..4u8) * 60).collect();
            let img = Img {
                data: &data,
                w,
                h,
                white: 255,
            };
            let (x0, y0) = (rng.random_range(0..10), rng.random_range(0..10));
            let rect = Rect {
                x0,
                y0,
                x1: rng.random_range(x0 + 1..=w),
                y1: rng.random_range(y0 + 1..=h),
            };
            let (x, y, half) = (
                rng.random_range(0..w),
                rng.random_range(0..h),
                rng.random_range(0..8),
            );
            assert_eq!(
                brightest_patch(&img, &rect, x, y, half),
                brightest_patch_by_definition(&img, &rect, x, y, half),
                "case {case}: rect {rect:?}, seed ({x}, {y}), half {half}"
            );
        }
    }
}
