//! The calibration overlay: the image with the points used (green crosses), the rejected ones (red
//! squares), the fitted grid mapped back into the image (cyan) and the screen axes from the origin
//! (x orange, y magenta), so a user can see at a glance whether the fit sits on the ruling.

use super::homography::PointPair;
use super::{CalibError, Calibration};
use crate::units::ScreenPoint;
use image::{Rgb, RgbImage};
use imageproc::drawing::{draw_hollow_rect_mut, draw_line_segment_mut};
use imageproc::rect::Rect;
use std::path::Path;

const USED: Rgb<u8> = Rgb([40, 220, 60]);
const REJECTED: Rgb<u8> = Rgb([240, 30, 30]);
const GRID: Rgb<u8> = Rgb([0, 200, 230]);
const X_AXIS: Rgb<u8> = Rgb([255, 140, 0]);
const Y_AXIS: Rgb<u8> = Rgb([230, 0, 200]);

/// Draw the overlay onto a copy of `base`.
pub fn render(
    base: &RgbImage,
    calib: &Calibration,
    pairs: &[PointPair],
    used: &[usize],
    grid_pitch_mm: f64,
) -> RgbImage {
    let mut img = base.clone();
    let (x0, x1, y0, y1) = used_extent(pairs, used);
    let pitch = if grid_pitch_mm > 0.0 {
        grid_pitch_mm
    } else {
        nice_pitch((x1 - x0).max(y1 - y0) / 10.0)
    };
    if x0 <= x1 && y0 <= y1 && pitch.is_finite() && pitch > 0.0 {
        draw_grid(&mut img, calib, (x0, x1, y0, y1), pitch);
        draw_axes(&mut img, calib, 3.0 * pitch);
    }
    draw_points(&mut img, pairs, used);
    img
}

/// Extent of the used points on the screen, mm: (x min, x max, y min, y max); empty (min > max) when
/// none is used.
fn used_extent(pairs: &[PointPair], used: &[usize]) -> (f64, f64, f64, f64) {
    let (mut x0, mut x1, mut y0, mut y1) = (f64::MAX, f64::MIN, f64::MAX, f64::MIN);
    for &i in used {
        let s = pairs[i].screen;
        x0 = x0.min(s.x_mm);
        x1 = x1.max(s.x_mm);
        y0 = y0.min(s.y_mm);
        y1 = y1.max(s.y_mm);
    }
    (x0, x1, y0, y1)
}

/// The screen lines every `pitch` mm over the extent widened by one pitch each way (none when that
/// would be absurdly many).
fn draw_grid(
    img: &mut RgbImage,
    calib: &Calibration,
    (x0, x1, y0, y1): (f64, f64, f64, f64),
    pitch: f64,
) {
    let (gx0, gx1) = ((x0 / pitch).floor() - 1.0, (x1 / pitch).ceil() + 1.0);
    let (gy0, gy1) = ((y0 / pitch).floor() - 1.0, (y1 / pitch).ceil() + 1.0);
    let lines = ((gx1 - gx0) + (gy1 - gy0)) as usize;
    if lines >= 2000 {
        return;
    }
    let mut k = gx0;
    while k <= gx1 {
        segment(
            img,
            calib,
            (k * pitch, gy0 * pitch),
            (k * pitch, gy1 * pitch),
            GRID,
        );
        k += 1.0;
    }
    let mut k = gy0;
    while k <= gy1 {
        segment(
            img,
            calib,
            (gx0 * pitch, k * pitch),
            (gx1 * pitch, k * pitch),
            GRID,
        );
        k += 1.0;
    }
}

/// The screen axes from the origin, `len` mm long, with arrow heads.
fn draw_axes(img: &mut RgbImage, calib: &Calibration, len: f64) {
    segment(img, calib, (0.0, 0.0), (len, 0.0), X_AXIS);
    segment(img, calib, (0.0, 0.0), (0.0, len), Y_AXIS);
    segment(img, calib, (len, 0.0), (0.85 * len, 0.1 * len), X_AXIS);
    segment(img, calib, (len, 0.0), (0.85 * len, -0.1 * len), X_AXIS);
    segment(img, calib, (0.0, len), (0.1 * len, 0.85 * len), Y_AXIS);
    segment(img, calib, (0.0, len), (-0.1 * len, 0.85 * len), Y_AXIS);
}

/// Used points as crosses, rejected ones as squares, at their image positions.
fn draw_points(img: &mut RgbImage, pairs: &[PointPair], used: &[usize]) {
    for (i, p) in pairs.iter().enumerate() {
        let (x, y) = (p.pixel.x as f32, p.pixel.y as f32);
        if used.contains(&i) {
            draw_line_segment_mut(img, (x - 3.0, y), (x + 3.0, y), USED);
            draw_line_segment_mut(img, (x, y - 3.0), (x, y + 3.0), USED);
        } else {
            draw_hollow_rect_mut(
                img,
                Rect::at(x.round() as i32 - 4, y.round() as i32 - 4).of_size(9, 9),
                REJECTED,
            );
        }
    }
}

/// A round pitch (1, 2 or 5 times a power of ten) near `x`.
fn nice_pitch(x: f64) -> f64 {
    if !(x.is_finite() && x > 0.0) {
        return 0.0;
    }
    let p = 10f64.powf(x.log10().floor());
    let m = x / p;
    p * if m < 2.0 {
        1.0
    } else if m < 5.0 {
        2.0
    } else {
        5.0
    }
}

/// A straight screen segment drawn as short image chords (the map keeps lines straight, but the
/// chords keep it right where a line runs through the horizon of the homography).
fn segment(img: &mut RgbImage, calib: &Calibration, a: (f64, f64), b: (f64, f64), c: Rgb<u8>) {
    let n = 16;
    let mut prev: Option<(f32, f32)> = None;
    let (w, h) = (img.width() as f64, img.height() as f64);
    for k in 0..=n {
        let t = k as f64 / n as f64;
        let q = calib.to_image(ScreenPoint {
            x_mm: a.0 + t * (b.0 - a.0),
            y_mm: a.1 + t * (b.1 - a.1),
        });
        let ok = q.x.is_finite()
            && q.y.is_finite()
            && q.x.abs() < 4.0 * w + 1e4
            && q.y.abs() < 4.0 * h + 1e4;
        let cur = ok.then_some((q.x as f32, q.y as f32));
        if let (Some(p), Some(q)) = (prev, cur) {
            draw_line_segment_mut(img, p, q, c);
        }
        prev = cur;
    }
}

/// Render and write the overlay PNG.
pub fn write(
    path: &Path,
    base: &RgbImage,
    calib: &Calibration,
    pairs: &[PointPair],
    used: &[usize],
    grid_pitch_mm: f64,
) -> Result<(), CalibError> {
    let img = render(base, calib, pairs, used, grid_pitch_mm);
    crate::outfile::write_whole(path, |out| {
        img.write_to(out, image::ImageFormat::Png)
            .map_err(|e| std::io::Error::other(e.to_string()))
    })
    .map_err(|source| CalibError::Write {
        path: path.to_path_buf(),
        source,
    })
}
