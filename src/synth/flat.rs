//! A Gaussian spot on a flat background: the simplest scene, whose expected pixel values are known in
//! closed form, for comparing estimators with their Cramér–Rao bound.

use super::{check_at_least, check_size, Sensor, SynthError};
use crate::frame::Plane;
use crate::units::PixelPoint;

/// A point-sampled isotropic Gaussian on a constant background.
///
/// The expected (noise-free, unclipped) value of pixel (x, y), pixel centres at integers, is
/// `background_dn + peak_dn * exp(-((x - x0)^2 + (y - y0)^2) / (2 sigma_px^2))`; [`FlatSpot::expected`]
/// returns it. The sensor then adds its noise, rounds and clips.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FlatSpot {
    pub width: usize,
    pub height: usize,
    pub centre: PixelPoint,
    /// Amplitude above the background, DN; may exceed the sensor's white level (then it is clipped).
    pub peak_dn: f64,
    pub background_dn: f64,
    pub sigma_px: f64,
    pub sensor: Sensor,
}

impl FlatSpot {
    /// The expected value of pixel (x, y) before noise, rounding and clipping.
    #[inline]
    pub fn expected(&self, x: f64, y: f64) -> f64 {
        let dx = x - self.centre.x;
        let dy = y - self.centre.y;
        self.background_dn
            + self.peak_dn * (-(dx * dx + dy * dy) / (2.0 * self.sigma_px * self.sigma_px)).exp()
    }

    fn validate(&self) -> Result<(), SynthError> {
        check_size(self.width, self.height)?;
        check_at_least("spot.sigma_px", self.sigma_px, 0.05)?;
        check_at_least("spot.peak_dn", self.peak_dn, 0.0)?;
        check_at_least("spot.background_dn", self.background_dn, 0.0)?;
        check_at_least("spot.centre.x", self.centre.x, f64::MIN)?;
        check_at_least("spot.centre.y", self.centre.y, f64::MIN)?;
        self.sensor.validate()
    }
}

/// Render a [`FlatSpot`] with noise drawn from `seed`.
pub fn render_flat_spot(spot: &FlatSpot, seed: u64) -> Result<Plane, SynthError> {
    spot.validate()?;
    let (w, h) = (spot.width, spot.height);
    let mut light = Vec::with_capacity(w * h);
    for y in 0..h {
        for x in 0..w {
            light.push(spot.expected(x as f64, y as f64) as f32);
        }
    }
    Ok(spot.sensor.expose(light, w, h, seed))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spot(
        w: usize,
        h: usize,
        centre: (f64, f64),
        peak: f64,
        bg: f64,
        sigma: f64,
        noise: f64,
    ) -> FlatSpot {
        FlatSpot {
            width: w,
            height: h,
            centre: PixelPoint {
                x: centre.0,
                y: centre.1,
            },
            peak_dn: peak,
            background_dn: bg,
            sigma_px: sigma,
            sensor: Sensor {
                noise_dn: noise,
                blur_sigma_px: 0.0,
                white: 255,
            },
        }
    }

    #[test]
    fn noise_free_spot_has_its_peak_at_the_centre() {
        let s = spot(21, 15, (10.0, 7.0), 100.0, 20.0, 2.0, 0.0);
        let p = render_flat_spot(&s, 0).unwrap();
        assert_eq!(p.get(10, 7), Some(120));
        assert_eq!(p.get(0, 0), Some(20));
        // One sigma away the Gaussian is exp(-1/2) of its peak: 20 + 60.65 rounds to 81.
        assert_eq!(p.get(12, 7), Some(81));
        let bad = FlatSpot {
            sigma_px: -1.0,
            ..s
        };
        assert!(render_flat_spot(&bad, 0).is_err());
    }

    #[test]
    fn same_seed_same_frame() {
        let s = spot(32, 32, (15.3, 16.7), 180.0, 40.0, 2.5, 3.0);
        assert_eq!(render_flat_spot(&s, 7), render_flat_spot(&s, 7));
        assert_ne!(render_flat_spot(&s, 7), render_flat_spot(&s, 8));
    }
}
