//! The full scene: a ruled paper screen, unevenly lit, seen in perspective, with a laser spot on it.

use super::view::map_point;
use super::{check_at_least, check_size, Sensor, SynthError};
use crate::frame::Plane;
use crate::units::{PixelPoint, ScreenPoint};
use nalgebra::Matrix3;

/// A paper screen ruled with a square grid of dark lines.
///
/// Lines run at x_mm = `origin.x_mm + k * pitch_mm` and y_mm = `origin.y_mm + k * pitch_mm` for every
/// integer k; every `major_every`-th line (k divisible by it, 0 = never) is `major_width_mm` wide instead
/// of `line_width_mm`. Only the rectangle `extent_mm` = (x_min, y_min, x_max, y_max) is paper; outside it
/// the surround has reflectance `surround_reflectance`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RuledScreen {
    pub pitch_mm: f64,
    pub line_width_mm: f64,
    pub major_every: u32,
    pub major_width_mm: f64,
    pub origin: ScreenPoint,
    pub extent_mm: (f64, f64, f64, f64),
    /// Reflectance of the ink relative to the paper (0 = black lines, 1 = invisible).
    pub ink_reflectance: f64,
    pub surround_reflectance: f64,
}

impl Default for RuledScreen {
    /// 1 mm ruling, 0.15 mm lines, 0.4 mm lines every 10 mm, ink at 30 % of the paper, 500 x 300 mm of
    /// paper centred on the origin, dark surround.
    fn default() -> Self {
        Self {
            pitch_mm: 1.0,
            line_width_mm: 0.15,
            major_every: 10,
            major_width_mm: 0.4,
            origin: ScreenPoint::default(),
            extent_mm: (-250.0, -150.0, 250.0, 150.0),
            ink_reflectance: 0.3,
            surround_reflectance: 0.1,
        }
    }
}

/// How the screen is lit, in image coordinates.
///
/// The paper's brightness at pixel (x, y) is
/// `paper_dn * (1 + gradient_x * u + gradient_y * v) * (1 - vignetting * (u^2 + v^2) / 2)`, with u, v
/// running from -1 to 1 across the image; `ambient_dn` (stray light, sensor offset) is added everywhere.
/// Change these from frame to frame to mimic slowly changing room light.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Illumination {
    pub paper_dn: f64,
    pub gradient_x: f64,
    pub gradient_y: f64,
    pub vignetting: f64,
    pub ambient_dn: f64,
}

impl Default for Illumination {
    /// A dim room: paper at 60 DN, a 10 % left-right gradient, 15 % vignetting, 5 DN ambient.
    fn default() -> Self {
        Self {
            paper_dn: 60.0,
            gradient_x: 0.1,
            gradient_y: 0.0,
            vignetting: 0.15,
            ambient_dn: 5.0,
        }
    }
}

/// Speckle-like multiplicative modulation of the spot.
///
/// An exponential-intensity random field (as fully developed speckle has), drawn on a lattice of
/// `grain_px` spacing fixed to the image and interpolated bilinearly, is mixed in as
/// `1 + contrast * (field - 1)`. The pattern depends only on `seed`, so it stays put while the spot
/// moves across it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Speckle {
    pub contrast: f64,
    pub grain_px: f64,
    pub seed: u64,
}

/// The reflected laser spot: an isotropic Gaussian in the image, centred where `centre` on the screen
/// lands.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LaserSpot {
    pub centre: ScreenPoint,
    /// Amplitude above the lit screen, DN; may exceed the white level (the sensor clips it).
    pub peak_dn: f64,
    pub sigma_px: f64,
    pub speckle: Option<Speckle>,
}

/// Everything needed to render one frame.
#[derive(Debug, Clone, PartialEq)]
pub struct Scene {
    pub width: usize,
    pub height: usize,
    /// Homography from homogeneous screen millimetres to homogeneous image pixels (see
    /// [`CameraView::homography`](super::CameraView::homography)).
    pub screen_to_image: Matrix3<f64>,
    pub screen: RuledScreen,
    pub illumination: Illumination,
    pub spot: Option<LaserSpot>,
    pub sensor: Sensor,
}

/// What was drawn, to compare estimates with.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Truth {
    /// Spot centre in the image (pixel centres at integers); `None` without a spot or when it maps to
    /// infinity.
    pub spot_px: Option<PixelPoint>,
    /// Spot centre on the screen.
    pub spot_mm: Option<ScreenPoint>,
}

impl RuledScreen {
    fn validate(&self) -> Result<(), SynthError> {
        check_at_least("screen.pitch_mm", self.pitch_mm, 1e-3)?;
        check_at_least("screen.line_width_mm", self.line_width_mm, 0.0)?;
        check_at_least("screen.major_width_mm", self.major_width_mm, 0.0)?;
        check_at_least("screen.ink_reflectance", self.ink_reflectance, 0.0)?;
        check_at_least(
            "screen.surround_reflectance",
            self.surround_reflectance,
            0.0,
        )?;
        let (a, b, c, d) = self.extent_mm;
        for v in [a, b, c, d, self.origin.x_mm, self.origin.y_mm] {
            check_at_least("screen.extent_mm / origin", v, f64::MIN)?;
        }
        if self.line_width_mm >= self.pitch_mm || self.major_width_mm >= self.pitch_mm {
            return Err(SynthError::BadParameter {
                name: "screen.line_width_mm",
                value: self.line_width_mm.max(self.major_width_mm),
                why: "lines must be narrower than the pitch",
            });
        }
        Ok(())
    }
}

/// One family of ruling lines with everything the per-pixel loop needs precomputed.
struct Ruling {
    pitch: f64,
    inv_pitch: f64,
    minor_half: f64,
    major_half: f64,
    major_every: i64,
    inv_major_every: f64,
    widest: f64,
}

impl Ruling {
    fn of(screen: &RuledScreen) -> Self {
        Self {
            pitch: screen.pitch_mm,
            inv_pitch: 1.0 / screen.pitch_mm,
            minor_half: 0.5 * screen.line_width_mm,
            major_half: 0.5 * screen.major_width_mm,
            major_every: screen.major_every as i64,
            inv_major_every: if screen.major_every > 0 {
                1.0 / screen.major_every as f64
            } else {
                0.0
            },
            widest: screen.line_width_mm.max(screen.major_width_mm),
        }
    }

    /// Half the width of line number k. k is a multiple of m exactly when m times the nearest integer
    /// to k / m gives k back (a multiplication instead of an integer division in the per-pixel loop).
    #[inline]
    fn half_width(&self, k: i64) -> f64 {
        if self.major_every > 0
            && round_to_i64(k as f64 * self.inv_major_every) * self.major_every == k
        {
            self.major_half
        } else {
            self.minor_half
        }
    }

    /// Fraction of a box of width `s` (reciprocal `inv_s`) centred at coordinate `c` (relative to the
    /// line origin) covered by ink of this family.
    #[inline]
    fn cover(&self, c: f64, s: f64, inv_s: f64) -> f64 {
        let k0 = round_to_i64(c * self.inv_pitch);
        let d = c - k0 as f64 * self.pitch;
        let half = self.half_width(k0);
        let mut cover = overlap(d - 0.5 * s, d + 0.5 * s, -half, half);
        // Neighbouring lines matter only when the footprint is nearly as wide as the gap.
        if s + self.widest > self.pitch {
            for k in [k0 - 1, k0 + 1] {
                let half = self.half_width(k);
                let dk = c - k as f64 * self.pitch;
                cover += overlap(dk - 0.5 * s, dk + 0.5 * s, -half, half);
            }
        }
        (cover * inv_s).min(1.0)
    }
}

/// Nearest integer, by truncating after a shift that makes every supported value positive (faster than
/// `f64::round` without special instructions).
#[inline]
fn round_to_i64(v: f64) -> i64 {
    const SHIFT: i64 = 1 << 40;
    (v + 0.5 + SHIFT as f64) as i64 - SHIFT
}

/// Length of the overlap of intervals [a0, a1] and [b0, b1].
#[inline]
fn overlap(a0: f64, a1: f64, b0: f64, b1: f64) -> f64 {
    (a1.min(b1) - a0.max(b0)).max(0.0)
}

impl Scene {
    fn validate(&self) -> Result<Matrix3<f64>, SynthError> {
        check_size(self.width, self.height)?;
        self.screen.validate()?;
        self.sensor.validate()?;
        let il = &self.illumination;
        check_at_least("illumination.paper_dn", il.paper_dn, 0.0)?;
        check_at_least("illumination.ambient_dn", il.ambient_dn, 0.0)?;
        check_at_least("illumination.gradient_x", il.gradient_x, f64::MIN)?;
        check_at_least("illumination.gradient_y", il.gradient_y, f64::MIN)?;
        check_at_least("illumination.vignetting", il.vignetting, 0.0)?;
        if let Some(s) = &self.spot {
            check_at_least("spot.peak_dn", s.peak_dn, 0.0)?;
            check_at_least("spot.sigma_px", s.sigma_px, 0.05)?;
            check_at_least("spot.centre", s.centre.x_mm, f64::MIN)?;
            check_at_least("spot.centre", s.centre.y_mm, f64::MIN)?;
            if let Some(sp) = &s.speckle {
                check_at_least("speckle.contrast", sp.contrast, 0.0)?;
                check_at_least("speckle.grain_px", sp.grain_px, 0.5)?;
            }
        }
        if !self.screen_to_image.iter().all(|v| v.is_finite()) {
            return Err(SynthError::SingularHomography);
        }
        self.screen_to_image
            .try_inverse()
            .filter(|m| m.iter().all(|v| v.is_finite()))
            .ok_or(SynthError::SingularHomography)
    }

    /// Where the spot's centre lands in the image.
    pub fn truth(&self) -> Truth {
        match &self.spot {
            None => Truth {
                spot_px: None,
                spot_mm: None,
            },
            Some(s) => Truth {
                spot_px: map_point(&self.screen_to_image, s.centre.x_mm, s.centre.y_mm)
                    .map(|(x, y)| PixelPoint { x, y }),
                spot_mm: Some(s.centre),
            },
        }
    }
}

/// Render `scene`, drawing the sensor noise from `seed`. Returns the plane and what was drawn.
///
/// The ruling is anti-aliased: each pixel's footprint on the screen (from the local derivatives of the
/// inverse homography) is treated as a box of the same spread, and the ink it covers is computed in
/// closed form. The spot is added in image space, then the sensor blurs, adds noise, rounds and clips.
/// A 1920 x 1080 frame takes a few tens of milliseconds in a release build.
pub fn render_scene(scene: &Scene, seed: u64) -> Result<(Plane, Truth), SynthError> {
    let hinv = scene.validate()?;
    let (w, h) = (scene.width, scene.height);
    let mut light = vec![0.0f32; w * h];
    draw_screen(scene, &hinv, &mut light);
    let truth = scene.truth();
    if let (Some(spot), Some(c)) = (&scene.spot, truth.spot_px) {
        draw_spot(spot, c, w, h, &mut light);
    }
    Ok((scene.sensor.expose(light, w, h, seed), truth))
}

fn draw_screen(scene: &Scene, hinv: &Matrix3<f64>, light: &mut [f32]) {
    let (w, h) = (scene.width, scene.height);
    let sc = &scene.screen;
    let il = &scene.illumination;
    let (xmin, ymin, xmax, ymax) = sc.extent_mm;
    let half_w = (w as f64 / 2.0).max(0.5);
    let half_h = (h as f64 / 2.0).max(0.5);
    let ink_loss = 1.0 - sc.ink_reflectance;
    let ruling = Ruling::of(sc);
    for yi in 0..h {
        let y = yi as f64;
        let v = (y - half_h) / half_h;
        let row = &mut light[yi * w..(yi + 1) * w];
        let (mut fx, mut fy) = (1.0, 1.0);
        let (mut ifx, mut ify) = (1.0, 1.0);
        for (xi, out) in row.iter_mut().enumerate() {
            let x = xi as f64;
            let wz = hinv[(2, 0)] * x + hinv[(2, 1)] * y + hinv[(2, 2)];
            if wz.abs() < 1e-12 {
                *out = il.ambient_dn as f32;
                (fx, fy, ifx, ify) = (1.0, 1.0, 1.0, 1.0);
                continue;
            }
            let iw = 1.0 / wz;
            let sx = (hinv[(0, 0)] * x + hinv[(0, 1)] * y + hinv[(0, 2)]) * iw;
            let sy = (hinv[(1, 0)] * x + hinv[(1, 1)] * y + hinv[(1, 2)]) * iw;
            // Derivatives of the screen coordinates along the pixel axes; a pixel's footprint in
            // each screen coordinate is a sum of two boxes, replaced by one box of equal variance.
            // It changes by well under 1 % over 8 px, so it is refreshed every 8 px.
            if xi % 8 == 0 {
                let (ax, bx) = (
                    hinv[(0, 0)] - sx * hinv[(2, 0)],
                    hinv[(0, 1)] - sx * hinv[(2, 1)],
                );
                let (ay, by) = (
                    hinv[(1, 0)] - sy * hinv[(2, 0)],
                    hinv[(1, 1)] - sy * hinv[(2, 1)],
                );
                fx = ((ax * ax + bx * bx).sqrt() * iw.abs()).max(1e-9);
                fy = ((ay * ay + by * by).sqrt() * iw.abs()).max(1e-9);
                ifx = 1.0 / fx;
                ify = 1.0 / fy;
            }
            let in_x = if sx - fx > xmin && sx + fx < xmax {
                1.0
            } else {
                overlap(sx - 0.5 * fx, sx + 0.5 * fx, xmin, xmax) * ifx
            };
            let in_y = if sy - fy > ymin && sy + fy < ymax {
                1.0
            } else {
                overlap(sy - 0.5 * fy, sy + 0.5 * fy, ymin, ymax) * ify
            };
            let inside = in_x * in_y;
            let reflect = if inside > 0.0 {
                let cx = ruling.cover(sx - sc.origin.x_mm, fx, ifx);
                let cy = ruling.cover(sy - sc.origin.y_mm, fy, ify);
                let ink = cx + cy - cx * cy;
                inside * (1.0 - ink_loss * ink) + (1.0 - inside) * sc.surround_reflectance
            } else {
                sc.surround_reflectance
            };
            let u = (x - half_w) / half_w;
            let lit = il.paper_dn
                * (1.0 + il.gradient_x * u + il.gradient_y * v)
                * (1.0 - il.vignetting * 0.5 * (u * u + v * v));
            *out = (lit.max(0.0) * reflect + il.ambient_dn) as f32;
        }
    }
}

/// A reproducible uniform number in (0, 1) for lattice node (i, j) of a speckle pattern.
fn lattice_uniform(seed: u64, i: i64, j: i64) -> f64 {
    // splitmix64 finaliser over a combination of the inputs (common practice, no source).
    let mut z = seed
        ^ (i as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15)
        ^ (j as u64).wrapping_mul(0xC2B2_AE3D_27D4_EB4F);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^= z >> 31;
    ((z >> 11) as f64 + 0.5) / (1u64 << 53) as f64
}

fn draw_spot(spot: &LaserSpot, c: PixelPoint, w: usize, h: usize, light: &mut [f32]) {
    let reach = (5.0 * spot.sigma_px).ceil() + 1.0;
    let x0 = (c.x - reach).floor().max(0.0);
    let x1 = (c.x + reach).ceil().min(w as f64 - 1.0);
    let y0 = (c.y - reach).floor().max(0.0);
    let y1 = (c.y + reach).ceil().min(h as f64 - 1.0);
    if x0 > x1 || y0 > y1 {
        return;
    }
    let inv2s2 = 1.0 / (2.0 * spot.sigma_px * spot.sigma_px);
    for yi in y0 as usize..=y1 as usize {
        for xi in x0 as usize..=x1 as usize {
            let dx = xi as f64 - c.x;
            let dy = yi as f64 - c.y;
            let mut v = spot.peak_dn * (-(dx * dx + dy * dy) * inv2s2).exp();
            if let Some(sp) = &spot.speckle {
                let gx = xi as f64 / sp.grain_px;
                let gy = yi as f64 / sp.grain_px;
                let (i, j) = (gx.floor(), gy.floor());
                let (fx, fy) = (gx - i, gy - j);
                let e = |a: f64, b: f64| -lattice_uniform(sp.seed, a as i64, b as i64).ln();
                let field = e(i, j) * (1.0 - fx) * (1.0 - fy)
                    + e(i + 1.0, j) * fx * (1.0 - fy)
                    + e(i, j + 1.0) * (1.0 - fx) * fy
                    + e(i + 1.0, j + 1.0) * fx * fy;
                v *= (1.0 + sp.contrast * (field - 1.0)).max(0.0);
            }
            light[yi * w + xi] += v as f32;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::super::CameraView;
    use super::*;

    fn scene(w: usize, h: usize) -> Scene {
        let view = CameraView::square_on(ScreenPoint::default(), 4.0, w, h);
        Scene {
            width: w,
            height: h,
            screen_to_image: view.homography().unwrap(),
            screen: RuledScreen::default(),
            illumination: Illumination {
                gradient_x: 0.0,
                vignetting: 0.0,
                ..Illumination::default()
            },
            spot: None,
            sensor: Sensor {
                noise_dn: 0.0,
                ..Sensor::default()
            },
        }
    }

    #[test]
    fn ink_covers_the_expected_fraction_of_the_paper() {
        // With 1 mm pitch, 0.15 mm minor lines and 0.4 mm major lines every 10 mm, the inked fraction
        // of one axis is (9 * 0.15 + 0.4) / 10 = 0.175, and of the plane 1 - (1 - 0.175)^2.
        let s = scene(400, 400);
        let (p, _) = render_scene(&s, 1).unwrap();
        let il = s.illumination;
        let mean: f64 = p.values().map(f64::from).sum::<f64>() / p.values().len() as f64;
        let f = 1.0 - (1.0f64 - 0.175).powi(2);
        let expect = il.ambient_dn + il.paper_dn * (1.0 - 0.7 * f);
        assert!(
            (mean - expect).abs() < 1.0,
            "mean {mean}, expected {expect}"
        );
    }

    #[test]
    fn spot_truth_follows_the_homography_and_clips() {
        let mut s = scene(200, 120);
        s.spot = Some(LaserSpot {
            centre: ScreenPoint {
                x_mm: 3.3,
                y_mm: -2.1,
            },
            peak_dn: 600.0,
            sigma_px: 3.0,
            speckle: Some(Speckle {
                contrast: 0.3,
                grain_px: 2.0,
                seed: 9,
            }),
        });
        let (p, t) = render_scene(&s, 1).unwrap();
        let c = t.spot_px.unwrap();
        assert!((c.x - (99.5 + 13.2)).abs() < 1e-9 && (c.y - (59.5 - 8.4)).abs() < 1e-9);
        let sat = p.values().filter(|&v| v == 255).count();
        assert!(sat > 5, "a 600 DN spot clips at 255: {sat} clipped pixels");
        assert_eq!(render_scene(&s, 1).unwrap().0, p);
    }

    #[test]
    fn bad_scenes_are_refused() {
        let mut s = scene(10, 10);
        s.screen_to_image = Matrix3::zeros();
        assert_eq!(
            render_scene(&s, 0).unwrap_err(),
            SynthError::SingularHomography
        );
        let mut s = scene(10, 10);
        s.width = 0;
        assert!(matches!(
            render_scene(&s, 0),
            Err(SynthError::EmptyImage { .. })
        ));
        s = scene(10, 10);
        s.screen.line_width_mm = 2.0;
        assert!(render_scene(&s, 0)
            .unwrap_err()
            .to_string()
            .contains("pitch"));
    }
}
