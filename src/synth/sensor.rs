//! The camera sensor shared by every renderer: optical blur, additive Gaussian read noise, rounding to
//! whole digital numbers and clipping at the white level.

use super::{check_at_least, SynthError};
use crate::frame::Plane;
use ndarray::Array2;
use rand::rngs::SmallRng;
use rand::SeedableRng;
use rand_distr::{Distribution, Normal};

/// How the sensor turns light (in DN, unbounded) into stored pixels.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sensor {
    /// Standard deviation of the additive Gaussian noise, DN.
    pub noise_dn: f64,
    /// Standard deviation of an isotropic Gaussian optical blur, px (0 = none).
    pub blur_sigma_px: f64,
    /// The clip value: 255 for an 8-bit camera. Values are rounded and clipped to `0..=white`.
    pub white: u16,
}

impl Default for Sensor {
    /// An 8-bit camera with 2 DN of noise and no blur.
    fn default() -> Self {
        Self {
            noise_dn: 2.0,
            blur_sigma_px: 0.0,
            white: 255,
        }
    }
}

impl Sensor {
    pub(crate) fn validate(&self) -> Result<(), SynthError> {
        check_at_least("sensor.noise_dn", self.noise_dn, 0.0)?;
        check_at_least("sensor.blur_sigma_px", self.blur_sigma_px, 0.0)?;
        if self.blur_sigma_px > 50.0 {
            return Err(SynthError::BadParameter {
                name: "sensor.blur_sigma_px",
                value: self.blur_sigma_px,
                why: "blur wider than 50 px is not supported",
            });
        }
        if self.white == 0 {
            return Err(SynthError::BadParameter {
                name: "sensor.white",
                value: 0.0,
                why: "the white level must be at least 1",
            });
        }
        Ok(())
    }

    /// Blur (if asked), add noise from `seed`, round and clip `light` (row-major, `width` x `height`).
    /// A sensor whose white level fits in 8 bits gives an 8-bit plane, as such a camera would.
    pub(crate) fn expose(
        &self,
        mut light: Vec<f32>,
        width: usize,
        height: usize,
        seed: u64,
    ) -> Plane {
        if self.blur_sigma_px > 0.0 {
            gaussian_blur(&mut light, width, height, self.blur_sigma_px);
        }
        let white = self.white as f32;
        let mut rng = SmallRng::seed_from_u64(seed);
        // `validate` keeps noise_dn finite and non-negative, so the distribution exists.
        let normal = Normal::new(0.0f32, self.noise_dn as f32)
            .ok()
            .filter(|_| self.noise_dn > 0.0);
        let mut read = |v: f32| match &normal {
            Some(n) => quantise(v + n.sample(&mut rng), white),
            None => quantise(v, white),
        };
        if self.white <= 255 {
            // Values are clipped to `white`, so they narrow to 8 bits exactly.
            let pixels: Vec<u8> = light.iter().map(|&v| read(v) as u8).collect();
            let mut plane = Plane::from_u8_vec(width, height, pixels)
                .expect("buffer length is width x height by construction");
            // An 8-bit sensor may clip below 255.
            plane.white = self.white;
            plane
        } else {
            let pixels: Vec<u16> = light.iter().map(|&v| read(v)).collect();
            Plane::new(
                Array2::from_shape_vec((height, width), pixels)
                    .expect("buffer length is width x height by construction"),
                self.white,
            )
        }
    }
}

#[inline]
fn quantise(v: f32, white: f32) -> u16 {
    v.round().clamp(0.0, white) as u16
}

/// Separable Gaussian blur in place, edges extended by repetition.
fn gaussian_blur(buf: &mut [f32], width: usize, height: usize, sigma: f64) {
    let radius = (3.0 * sigma).ceil() as isize;
    let kernel: Vec<f32> = {
        let k: Vec<f64> = (-radius..=radius)
            .map(|i| (-(i * i) as f64 / (2.0 * sigma * sigma)).exp())
            .collect();
        let s: f64 = k.iter().sum();
        k.iter().map(|v| (v / s) as f32).collect()
    };
    let mut tmp = vec![0.0f32; buf.len()];
    // Rows.
    for y in 0..height {
        let row = &buf[y * width..(y + 1) * width];
        let out = &mut tmp[y * width..(y + 1) * width];
        let r = radius as usize;
        for (x, o) in out.iter_mut().enumerate() {
            let mut acc = 0.0;
            if x >= r && x + r < width {
                for (kv, &v) in kernel.iter().zip(&row[x - r..=x + r]) {
                    acc += kv * v;
                }
            } else {
                for (j, &kv) in kernel.iter().enumerate() {
                    let xx =
                        (x as isize + j as isize - radius).clamp(0, width as isize - 1) as usize;
                    acc += kv * row[xx];
                }
            }
            *o = acc;
        }
    }
    // Columns, accumulated row by row for memory locality.
    buf.iter_mut().for_each(|v| *v = 0.0);
    for y in 0..height {
        for (j, &kv) in kernel.iter().enumerate() {
            let yy = (y as isize + j as isize - radius).clamp(0, height as isize - 1) as usize;
            let src = &tmp[yy * width..(yy + 1) * width];
            let dst = &mut buf[y * width..(y + 1) * width];
            for (d, &s) in dst.iter_mut().zip(src) {
                *d += kv * s;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frame::Pixels;

    #[test]
    fn blur_preserves_total_light_away_from_edges() {
        // A blur kernel normalised to unit sum keeps the total (common practice, no source).
        let (w, h) = (41, 41);
        let mut buf = vec![0.0f32; w * h];
        buf[20 * w + 20] = 1000.0;
        gaussian_blur(&mut buf, w, h, 2.0);
        let total: f32 = buf.iter().sum();
        assert!((total - 1000.0).abs() < 0.01, "total {total}");
        assert!(buf[20 * w + 20] < 100.0);
    }

    #[test]
    fn quantises_and_clips() {
        let s = Sensor {
            noise_dn: 0.0,
            blur_sigma_px: 0.0,
            white: 255,
        };
        let p = s.expose(vec![-5.0, 10.4, 10.6, 300.0], 4, 1, 1);
        assert_eq!(p.values().collect::<Vec<_>>(), vec![0, 10, 11, 255]);
        assert_eq!(p.white, 255);
        assert!(matches!(p.pixels(), Pixels::Eight(_)));
        let deep = Sensor { white: 4095, ..s };
        let p = deep.expose(vec![-5.0, 10.4, 10.6, 5000.0], 4, 1, 1);
        assert_eq!(p.values().collect::<Vec<_>>(), vec![0, 10, 11, 4095]);
        assert_eq!(p.white, 4095);
        assert!(matches!(p.pixels(), Pixels::Sixteen(_)));
    }
}
