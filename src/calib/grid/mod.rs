//! Finding a printed square grid of dark lines in a screen image, seen in perspective under uneven light.
//!
//! 1. Darkness: each pixel's shortfall from the local paper brightness (a block maximum, smoothed), so
//!    uneven light drops out.
//! 2. Repeat: the two lattice vectors of the darkness near the origin hint, from its autocorrelation
//!    ([`period`]); a weak repeat means no grid, or one too blurred or faint to use.
//! 3. Growth: from the intersection nearest the hint, neighbours are predicted by continuing the local
//!    steps (which follow the perspective), looked for as peaks of the smoothed darkness, and refined to
//!    subpixel precision ([`refine`]); each carries its lattice indices.
//! 4. Axes: x runs along the grid direction closest to the image horizontal and grows to the right, y
//!    grows towards the top of the image; the origin is the intersection nearest the hint.

mod grow;
pub mod period;
pub mod refine;

use super::homography::{fit_robust, PointPair, RobustOptions};
use super::CalibError;
use crate::frame::Plane;
use crate::units::{PixelPoint, ScreenPoint};
use image::{ImageBuffer, Luma};
use std::collections::HashMap;

/// A single-channel float image, row-major.
#[derive(Debug, Clone, PartialEq)]
pub struct Gray {
    pub w: usize,
    pub h: usize,
    pub data: Vec<f32>,
}

impl Gray {
    pub fn new(w: usize, h: usize, data: Vec<f32>) -> Self {
        Self { w, h, data }
    }
    pub fn from_image(img: &ImageBuffer<Luma<f32>, Vec<f32>>) -> Self {
        Self::new(
            img.width() as usize,
            img.height() as usize,
            img.as_raw().clone(),
        )
    }
    fn to_image(&self) -> ImageBuffer<Luma<f32>, Vec<f32>> {
        ImageBuffer::from_raw(self.w as u32, self.h as u32, self.data.clone())
            .unwrap_or_else(|| ImageBuffer::new(self.w as u32, self.h as u32))
    }
    #[inline]
    pub fn at(&self, x: usize, y: usize) -> f32 {
        self.data[y * self.w + x]
    }
    /// Bilinear value at (x, y) with pixel centres at integers; None outside the image.
    pub fn bilinear(&self, x: f64, y: f64) -> Option<f64> {
        if !(x >= 0.0 && y >= 0.0 && x <= (self.w - 1) as f64 && y <= (self.h - 1) as f64) {
            return None;
        }
        let (x0, y0) = (x.floor() as usize, y.floor() as usize);
        let (x1, y1) = ((x0 + 1).min(self.w - 1), (y0 + 1).min(self.h - 1));
        let (fx, fy) = (x - x0 as f64, y - y0 as f64);
        let a = self.at(x0, y0) as f64 * (1.0 - fx) + self.at(x1, y0) as f64 * fx;
        let b = self.at(x0, y1) as f64 * (1.0 - fx) + self.at(x1, y1) as f64 * fx;
        Some(a * (1.0 - fy) + b * fy)
    }
}

/// What the grid search found.
#[derive(Debug, Clone, PartialEq)]
pub struct GridDetection {
    /// One pair per intersection: its subpixel image position and its screen position, mm.
    pub pairs: Vec<PointPair>,
    /// Number of distinct grid lines seen: (lines of constant x, lines of constant y).
    pub lines: (usize, usize),
    /// Spacing of the lines near the origin, px.
    pub spacing_px: f64,
}

type P = (f64, f64);

fn norm(p: P) -> f64 {
    (p.0 * p.0 + p.1 * p.1).sqrt()
}

/// Darkness relative to the local paper level: 1 - I / paper, clipped at 0.
fn darkness(img: &Gray) -> Gray {
    let f = 8usize;
    let (sw, sh) = (img.w.div_ceil(f), img.h.div_ceil(f));
    let mut small = vec![0f32; sw * sh];
    for y in 0..img.h {
        for x in 0..img.w {
            let s = &mut small[(y / f) * sw + x / f];
            *s = s.max(img.at(x, y));
        }
    }
    let small = Gray::new(sw, sh, small);
    let sigma = (sw.max(sh) as f32 / 40.0).max(1.5);
    let paper = Gray::from_image(&imageproc::filter::gaussian_blur_f32(
        &small.to_image(),
        sigma,
    ));
    let mut out = vec![0f32; img.w * img.h];
    for y in 0..img.h {
        let sy = ((y as f64 + 0.5) / f as f64 - 0.5).clamp(0.0, (sh - 1) as f64);
        for x in 0..img.w {
            let sx = ((x as f64 + 0.5) / f as f64 - 0.5).clamp(0.0, (sw - 1) as f64);
            let p = paper.bilinear(sx, sy).unwrap_or(1.0).max(1e-6);
            out[y * img.w + x] = (1.0 - img.at(x, y) as f64 / p).max(0.0) as f32;
        }
    }
    Gray::new(img.w, img.h, out)
}

/// Find the grid in a float image (0 = black, 1 = white) and give each intersection its screen
/// position in mm; `name` is used in messages.
pub fn detect(
    img: &ImageBuffer<Luma<f32>, Vec<f32>>,
    name: &str,
    pitch_mm: f64,
    origin: Option<PixelPoint>,
) -> Result<GridDetection, CalibError> {
    detect_gray(&Gray::from_image(img), name, pitch_mm, origin)
}

/// Find the grid in a frame's pixel plane.
pub fn detect_plane(
    plane: &Plane,
    name: &str,
    pitch_mm: f64,
    origin: Option<PixelPoint>,
) -> Result<GridDetection, CalibError> {
    let white = plane.white.max(1) as f32;
    let data = plane.values().map(|v| v as f32 / white).collect();
    let gray = Gray::new(plane.width(), plane.height(), data);
    detect_gray(&gray, name, pitch_mm, origin)
}

/// Find the grid, index its intersections and give each its screen position in mm.
pub fn detect_gray(
    gray: &Gray,
    name: &str,
    pitch_mm: f64,
    origin: Option<PixelPoint>,
) -> Result<GridDetection, CalibError> {
    let fail = |reason: String| CalibError::Grid {
        image: name.to_string(),
        reason,
    };
    let hint = origin_hint(gray, origin).map_err(fail)?;
    let d = darkness(gray);
    let n = 256.min(gray.w).min(gray.h);
    let per = period::lattice(&d, hint.0, hint.1, n).ok_or_else(|| {
        fail(
            "no repeating pattern of dark lines near the origin; is the grid in view and lit?"
                .into(),
        )
    })?;
    let (lu, lv, spacing) = check_period(&per).map_err(fail)?;
    let s = Gray::from_image(&imageproc::filter::gaussian_blur_f32(
        &d.to_image(),
        (0.25 * spacing).max(0.7) as f32,
    ));
    let margin = 0.8 * spacing;
    let (seed, c0) = seed_crossing(&d, &s, hint, &per, spacing, margin).map_err(fail)?;
    let field = grow::Field {
        d: &d,
        s: &s,
        margin,
        c0,
    };
    let nodes = grow::grow(&field, seed, per.u, per.v, spacing);
    let (ni, nj) = check_lines(&nodes).map_err(fail)?;
    let (pairs, u_is_x) = index_pairs(&nodes, &per, (lu, lv), hint, pitch_mm);
    let pairs = keep_consistent(pairs, spacing, &fail)?;
    let (nx, ny) = if u_is_x { (ni, nj) } else { (nj, ni) };
    Ok(GridDetection {
        pairs,
        lines: (nx, ny),
        spacing_px: spacing,
    })
}

/// The origin hint (the image centre when none is given), checked to lie in the image.
fn origin_hint(gray: &Gray, origin: Option<PixelPoint>) -> Result<P, String> {
    if gray.w < 16 || gray.h < 16 {
        return Err(format!("the image is only {}x{} px", gray.w, gray.h));
    }
    let hint = origin
        .map(|o| (o.x, o.y))
        .unwrap_or(((gray.w as f64 - 1.0) / 2.0, (gray.h as f64 - 1.0) / 2.0));
    if !(hint.0 >= 0.0 && hint.1 >= 0.0 && hint.0 < gray.w as f64 && hint.1 < gray.h as f64) {
        return Err(format!(
            "the origin hint ({}, {}) px is outside the {}x{} px image",
            hint.0, hint.1, gray.w, gray.h
        ));
    }
    Ok(hint)
}

/// The lengths of the two lattice vectors and the line spacing (their mean), px, when the repeat is
/// strong, square and coarse enough to follow.
fn check_period(per: &period::Period) -> Result<(f64, f64, f64), String> {
    let (lu, lv) = (norm(per.u), norm(per.v));
    let spacing = 0.5 * (lu + lv);
    if per.strength < 0.04 {
        return Err(format!(
            "no repeating pattern of dark lines near the origin (repeat strength {:.3}); \
             is the grid in view, lit and in focus?",
            per.strength
        ));
    }
    if per.strength < 0.15 {
        return Err(format!(
            "the grid is too blurred or too faint: its lines repeat every {spacing:.1} px but stand out \
             only weakly from noise (repeat strength {:.2}, need 0.15); focus the camera and light the \
             screen evenly",
            per.strength
        ));
    }
    if lu / lv > 1.6 || lv / lu > 1.6 {
        return Err(format!(
            "inconsistent pitch: the two line directions repeat every {lu:.1} px and {lv:.1} px; a square \
             grid should give about equal spacings"
        ));
    }
    if spacing < 3.0 {
        return Err(format!(
            "the lines are only {spacing:.1} px apart, too close to locate; move the camera closer or use \
             a coarser grid"
        ));
    }
    Ok((lu, lv, spacing))
}

/// The intersection nearest the hint, refined, and its crossing contrast (which must show dark lines).
fn seed_crossing(
    d: &Gray,
    s: &Gray,
    hint: P,
    per: &period::Period,
    spacing: f64,
    margin: f64,
) -> Result<(P, f64), String> {
    let (seed_px, _) = grow::peak_near(s, hint, 0.75 * spacing, margin)
        .ok_or_else(|| "the origin hint is too close to the image edge".to_string())?;
    let seed = refine::intersection(d, seed_px, per.u, per.v).ok_or_else(|| {
        format!(
            "the grid is too blurred: the lines near the origin ({:.0}, {:.0}) px cannot be located",
            seed_px.0, seed_px.1
        )
    })?;
    let c0 = grow::crossing_contrast(s, seed, per.u, per.v).unwrap_or(0.0);
    if c0.is_nan() || c0 <= 0.0 {
        return Err(
            "the pattern near the origin has no line crossings darker than the cells; is it a grid of dark lines on light paper?"
                .into(),
        );
    }
    Ok((seed, c0))
}

/// Numbers of distinct lattice indices each way, when at least 3 lines each way and 9 intersections
/// were found.
fn check_lines(nodes: &HashMap<(i32, i32), grow::Node>) -> Result<(usize, usize), String> {
    let is: std::collections::BTreeSet<i32> = nodes.keys().map(|k| k.0).collect();
    let js: std::collections::BTreeSet<i32> = nodes.keys().map(|k| k.1).collect();
    if is.len() < 3 || js.len() < 3 || nodes.len() < 9 {
        return Err(format!(
            "too few lines: found crossings of only {} x {} lines ({} intersections); at least 3 lines \
             each way must be visible",
            is.len(),
            js.len(),
            nodes.len()
        ));
    }
    Ok((is.len(), js.len()))
}

/// Screen positions for the intersections, sorted from the top row down and left to right, and
/// whether the lattice's first vector is the screen x axis. Axes: x along the lattice direction
/// closest to the image horizontal, to the right; y up the image; origin at the intersection nearest
/// the hint.
fn index_pairs(
    nodes: &HashMap<(i32, i32), grow::Node>,
    per: &period::Period,
    (lu, lv): (f64, f64),
    hint: P,
    pitch_mm: f64,
) -> (Vec<PointPair>, bool) {
    let (u, v) = (per.u, per.v);
    let u_is_x = u.0.abs() / lu >= v.0.abs() / lv;
    let (ax, ay) = if u_is_x { (u, v) } else { (v, u) };
    let sx = if ax.0 >= 0.0 { 1 } else { -1 };
    let sy = if ay.1 <= 0.0 { 1 } else { -1 };
    let grid_xy = |k: &(i32, i32)| {
        if u_is_x {
            (sx * k.0, sy * k.1)
        } else {
            (sx * k.1, sy * k.0)
        }
    };
    let origin_key = nodes
        .iter()
        .min_by(|a, b| {
            let da = norm((a.1.p.0 - hint.0, a.1.p.1 - hint.1));
            let db = norm((b.1.p.0 - hint.0, b.1.p.1 - hint.1));
            da.total_cmp(&db)
        })
        .map(|(k, _)| grid_xy(k))
        .unwrap_or((0, 0));
    let mut keyed: Vec<((i32, i32), P)> = nodes
        .iter()
        .map(|(k, n)| {
            let g = grid_xy(k);
            ((g.0 - origin_key.0, g.1 - origin_key.1), n.p)
        })
        .collect();
    keyed.sort_by_key(|(g, _)| (-g.1, g.0));
    let pairs = keyed
        .iter()
        .map(|&((gx, gy), p)| PointPair {
            pixel: PixelPoint { x: p.0, y: p.1 },
            screen: ScreenPoint {
                x_mm: gx as f64 * pitch_mm,
                y_mm: gy as f64 * pitch_mm,
            },
            label: format!("grid ({gx}, {gy})"),
        })
        .collect();
    (pairs, u_is_x)
}

/// The intersections must sit on a square grid seen in perspective: keep the largest consistent set
/// (a patch where the growth slipped a line is left out), refuse when that is not most of them.
fn keep_consistent(
    pairs: Vec<PointPair>,
    spacing: f64,
    fail: &dyn Fn(String) -> CalibError,
) -> Result<Vec<PointPair>, CalibError> {
    let opts = RobustOptions {
        threshold_px: 0.25 * spacing,
        ..RobustOptions::default()
    };
    let fit = fit_robust(&pairs, &opts)?;
    if fit.used.len() * 2 < pairs.len() {
        return Err(fail(format!(
            "inconsistent pitch: only {} of {} intersections lie within a quarter of a spacing of one \
             square grid seen in perspective; is the grid printed evenly and flat?",
            fit.used.len(),
            pairs.len()
        )));
    }
    Ok(fit.used.iter().map(|&i| pairs[i].clone()).collect())
}
