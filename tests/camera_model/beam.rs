//! The laser light on the screen: the spot, its halo, its speckle, the window ghost, and how a
//! pixel collects it.
//!
//! - Spot: an elliptical Gaussian on the screen, I(u, v) = I0 exp(-(a^2 / 2 s_a^2 + b^2 / 2 s_b^2))
//!   with (a, b) the screen offsets turned by `angle_deg` (a diode beam's elliptical far field). Its
//!   peak is set in photo-electrons and normally exceeds the sensor's full well, so the core clips.
//! - Halo: light scattered in the optics and the enclosure window, a faint Gaussian `halo_scale`
//!   times wider carrying `halo_fraction` of the peak. Many scattering paths average its speckle
//!   out, so it is drawn smooth.
//! - Speckle: a rough screen lit by coherent light, imaged by a lens, gives fully developed
//!   subjective speckle: the field in the image plane is a circular complex Gaussian random field
//!   whose correlation is set by the lens aperture, so its intensity is exponentially distributed
//!   (contrast std / mean = 1) with a grain fixed in pixels (J. W. Goodman, "Speckle Phenomena in
//!   Optics", chapters 3 and 5, cited from memory). It is made here as white complex Gaussian noise
//!   low-pass filtered by a Gaussian of standard deviation s_k px, the taps scaled so that the sum of
//!   their squares is 1 (so E|a|^2 = 1); the intensity correlation is then exp(-r^2 / 2 s_k^2). A
//!   new field is drawn for each frame: over 1 s the beam moves over the rough paper and the laser's
//!   modes and the air shift, which decorrelates the pattern. A depolarising screen returns two
//!   independent patterns in orthogonal polarisations; the mean of M independent patterns has
//!   contrast 1 / sqrt(M) (`speckle_looks`, same source).
//! - Ghost: the enclosure window's second-surface reflection, a weaker copy of the spot at a fixed
//!   screen offset, with its own speckle.
//! - Blocking: a knife edge (a hand, a card) cuts the beam along u with a soft edge.
//! - Collection: each pixel averages the light times the ruling's transmission over 2 x 2
//!   sub-pixel points (each with a quarter of the pixel's footprint, using the local Jacobian), and
//!   over the exposure in time steps short enough that the spot moves at most a quarter pixel per
//!   step (motion blur). The speckle multiplies the laser light per pixel, and the lens's natural
//!   vignetting (cos^4 of the field angle) dims it as it dims the room light.

use super::camera::{Pose, ScreenMap};
use super::screen::Ruling;
use rand::Rng;
use rand_distr::StandardNormal;

#[derive(Debug, Clone)]
pub struct Beam {
    /// Standard deviations of the spot along its axes, mm.
    pub sigma_mm: (f64, f64),
    pub angle_deg: f64,
    /// Peak irradiance at the spot's centre in photo-electrons per pixel per exposure.
    pub peak_e: f64,
    pub halo_fraction: f64,
    pub halo_scale: f64,
    /// Speckle grain: standard deviation of the intensity correlation, px (0 = no speckle).
    pub speckle_px: f64,
    /// Independent speckle patterns summed in each frame (1 = fully developed, contrast 1; 2 for a
    /// depolarising screen such as paper seen without a polariser, contrast 1 / sqrt 2).
    pub speckle_looks: usize,
    /// The ghost's offset from the spot on the screen, mm, its peak relative to the spot's, and its
    /// width relative to the spot's.
    pub ghost_offset_mm: (f64, f64),
    pub ghost_fraction: f64,
    pub ghost_scale: f64,
}

impl Default for Beam {
    /// A spot of sigma 1.6 x 1.2 mm (about 4 x 3.4 px), peak 1.6 times the default full well, a 2 %
    /// halo 4 times wider, speckle grain 1.4 px (about a third of the spot's sigma), and a 20 % ghost
    /// 9 mm along and 6 mm across.
    fn default() -> Self {
        Self {
            sigma_mm: (1.6, 1.2),
            angle_deg: 15.0,
            peak_e: 9600.0,
            halo_fraction: 0.02,
            halo_scale: 4.0,
            speckle_px: 1.4,
            speckle_looks: 1,
            ghost_offset_mm: (9.0, 6.0),
            ghost_fraction: 0.2,
            ghost_scale: 1.2,
        }
    }
}

/// A window of the image holding laser light, electrons per pixel, row-major.
pub struct Patch {
    pub x0: usize,
    pub y0: usize,
    pub w: usize,
    pub h: usize,
    pub e: Vec<f64>,
}

/// A fully developed speckle intensity field of `w` x `h` pixels, mean 1, grain `sk` px.
pub fn speckle_field<R: Rng>(w: usize, h: usize, sk: f64, rng: &mut R) -> Vec<f64> {
    if sk <= 0.0 {
        return vec![1.0; w * h];
    }
    // A Gaussian filter of std q gives a field correlation exp(-r^2 / 4 q^2) and an intensity
    // correlation exp(-r^2 / 2 q^2): so q = sk.
    let m = (3.0 * sk).ceil() as usize;
    let taps: Vec<f64> = (0..=2 * m)
        .map(|i| (-((i as f64 - m as f64).powi(2)) / (2.0 * sk * sk)).exp())
        .collect();
    let norm = taps.iter().map(|t| t * t).sum::<f64>().sqrt();
    let taps: Vec<f64> = taps.iter().map(|t| t / norm).collect();
    let (bw, bh) = (w + 2 * m, h + 2 * m);
    let noise: Vec<(f64, f64)> = (0..bw * bh)
        .map(|_| {
            let re: f64 = rng.sample(StandardNormal);
            let im: f64 = rng.sample(StandardNormal);
            (
                re * std::f64::consts::FRAC_1_SQRT_2,
                im * std::f64::consts::FRAC_1_SQRT_2,
            )
        })
        .collect();
    // Rows first (bh x w), then columns (h x w).
    let mut rows = vec![(0.0, 0.0); bh * w];
    for y in 0..bh {
        for x in 0..w {
            let (mut a, mut b) = (0.0, 0.0);
            for (k, t) in taps.iter().enumerate() {
                let n = noise[y * bw + x + k];
                a += t * n.0;
                b += t * n.1;
            }
            rows[y * w + x] = (a, b);
        }
    }
    let mut out = vec![0.0; w * h];
    for y in 0..h {
        for x in 0..w {
            let (mut a, mut b) = (0.0, 0.0);
            for (k, t) in taps.iter().enumerate() {
                let n = rows[(y + k) * w + x];
                a += t * n.0;
                b += t * n.1;
            }
            out[y * w + x] = a * a + b * b;
        }
    }
    out
}

/// The mean of `looks` independent speckle fields (contrast 1 / sqrt(looks)).
pub fn speckle_looks<R: Rng>(w: usize, h: usize, sk: f64, looks: usize, rng: &mut R) -> Vec<f64> {
    let looks = looks.max(1);
    let mut sum = speckle_field(w, h, sk, rng);
    for _ in 1..looks {
        for (a, b) in sum.iter_mut().zip(speckle_field(w, h, sk, rng)) {
            *a += b;
        }
    }
    sum.iter_mut().for_each(|a| *a /= looks as f64);
    sum
}

/// One Gaussian on the screen: centre, axes, angle, peak.
#[derive(Debug, Clone, Copy)]
pub struct Blob {
    pub centre: (f64, f64),
    pub sigma: (f64, f64),
    pub angle: f64,
    pub peak: f64,
}

impl Blob {
    pub fn at(&self, u: f64, v: f64) -> f64 {
        let (du, dv) = (u - self.centre.0, v - self.centre.1);
        let (s, c) = self.angle.sin_cos();
        let a = c * du + s * dv;
        let b = -s * du + c * dv;
        self.peak * (-0.5 * ((a / self.sigma.0).powi(2) + (b / self.sigma.1).powi(2))).exp()
    }

    /// Screen radius holding the blob to below 1e-4 of its peak, mm.
    pub fn reach(&self) -> f64 {
        4.3 * self.sigma.0.max(self.sigma.1)
    }
}

/// Pixel bounding box of the screen discs of radius `reach` around `centres`, clipped to the image.
pub fn window(
    pose: &Pose,
    centres: &[(f64, f64)],
    reach: f64,
) -> Option<(usize, usize, usize, usize)> {
    let cam = pose.camera();
    let (mut x0, mut y0, mut x1, mut y1) = (f64::MAX, f64::MAX, f64::MIN, f64::MIN);
    for &(u, v) in centres {
        for (du, dv) in [
            (reach, reach),
            (reach, -reach),
            (-reach, reach),
            (-reach, -reach),
        ] {
            let (x, y) = pose.project(u + du, v + dv)?;
            x0 = x0.min(x);
            y0 = y0.min(y);
            x1 = x1.max(x);
            y1 = y1.max(y);
        }
    }
    let xa = (x0.floor() - 1.0).max(0.0) as usize;
    let ya = (y0.floor() - 1.0).max(0.0) as usize;
    let xb = ((x1.ceil() + 2.0).max(0.0) as usize).min(cam.width);
    let yb = ((y1.ceil() + 2.0).max(0.0) as usize).min(cam.height);
    (xb > xa && yb > ya).then_some((xa, ya, xb - xa, yb - ya))
}

/// Light from `blobs` (each at every centre of the exposure's time steps, shifted by the blob's own
/// offset) collected into a patch with ruling and optional speckle; `cut` is a knife edge
/// (u of the edge, softness mm): light at u above the edge passes.
pub struct Collect<'a> {
    pub map: &'a ScreenMap,
    pub ruling: &'a Ruling,
    pub path: &'a [(f64, f64)],
    pub cut: Option<(f64, f64)>,
}

impl Collect<'_> {
    pub fn patch<R: Rng>(
        &self,
        pose: &Pose,
        blobs: &[Blob],
        speckle: (f64, usize),
        rng: &mut R,
    ) -> Option<Patch> {
        let reach = blobs.iter().map(Blob::reach).fold(0.0, f64::max);
        let centres: Vec<(f64, f64)> = self
            .path
            .iter()
            .map(|c| (c.0 + blobs[0].centre.0, c.1 + blobs[0].centre.1))
            .collect();
        let (x0, y0, w, h) = window(pose, &centres, reach)?;
        let speckle = speckle_looks(w, h, speckle.0, speckle.1, rng);
        let n = self.path.len() as f64;
        let mut e = vec![0.0; w * h];
        for yy in 0..h {
            for xx in 0..w {
                let i = (y0 + yy) * self.map.width + x0 + xx;
                let (u, v) = self.map.uv[i];
                if !u.is_finite() {
                    continue;
                }
                let (fu, fv) = self.map.footprint[i];
                let mut sum = 0.0;
                for (su, sv) in [(-0.25, -0.25), (0.25, -0.25), (-0.25, 0.25), (0.25, 0.25)] {
                    let (pu, pv) = (u + su * fu, v + sv * fv);
                    let t = self.ruling.transmission(pu, pv, fu / 2.0, fv / 2.0);
                    let knife = match self.cut {
                        Some((edge, soft)) => 0.5 * (1.0 + ((pu - edge) / soft).tanh()),
                        None => 1.0,
                    };
                    let mut light = 0.0;
                    for c in self.path {
                        for b in blobs {
                            light += b.at(pu - c.0, pv - c.1);
                        }
                    }
                    sum += t * knife * light;
                }
                e[yy * w + xx] = sum / (4.0 * n) * speckle[yy * w + xx] * self.map.vignette[i];
            }
        }
        Some(Patch { x0, y0, w, h, e })
    }
}
