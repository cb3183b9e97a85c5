//! Lever geometry: the twist angle of the mirror from the spot's position along the scale.
//!
//! A beam reflected by a mirror turned by theta turns by 2 theta. With the mirror at distance L from the
//! scale and the undeflected beam meeting it at the foot point x0:
//! - flat screen perpendicular to the undeflected beam: x - x0 = L tan(2 theta), so
//!   theta = atan((x - x0) / L) / 2;
//! - curved scale of radius L centred on the mirror: the arc length is x - x0 = 2 L theta, so
//!   theta = (x - x0) / (2 L), exactly.
//!
//! Both are exact for their geometry; the small-angle form (x - x0) / (2 L) used on a flat screen would be
//! wrong by about (4/3) theta^2 relative ([`small_angle_error`]).

use crate::setup::{ScaleShape, Setup};
use crate::units::Radians;

/// An optical lever: screen distance, foot point and scale shape.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Lever {
    /// Mirror to scale, metres (L).
    pub distance_m: f64,
    /// Scale reading of the foot point, metres (x0).
    pub zero_m: f64,
    pub shape: ScaleShape,
}

impl Lever {
    /// The lever an apparatus file describes (its `[lever]` table; uncertainties are the budget's).
    pub fn from_setup(setup: &Setup) -> Self {
        Self {
            distance_m: setup.lever.screen_distance.value,
            zero_m: setup.lever.zero.value,
            shape: setup.lever.scale,
        }
    }

    /// Twist angle of the mirror for a scale reading `x_m` (metres along the scale axis).
    pub fn angle(&self, x_m: f64) -> Radians {
        let s = (x_m - self.zero_m) / self.distance_m;
        Radians(match self.shape {
            ScaleShape::Flat => 0.5 * s.atan(),
            ScaleShape::Curved => 0.5 * s,
        })
    }

    /// Scale reading (metres) where the spot falls for a twist angle: the inverse of [`Lever::angle`].
    pub fn reading(&self, theta: Radians) -> f64 {
        let s = match self.shape {
            ScaleShape::Flat => (2.0 * theta.0).tan(),
            ScaleShape::Curved => 2.0 * theta.0,
        };
        self.zero_m + s * self.distance_m
    }

    /// d theta / d x at a scale reading, rad per metre (for propagating a reading's uncertainty).
    pub fn sensitivity(&self, x_m: f64) -> f64 {
        let s = (x_m - self.zero_m) / self.distance_m;
        match self.shape {
            ScaleShape::Flat => 0.5 / (self.distance_m * (1.0 + s * s)),
            ScaleShape::Curved => 0.5 / self.distance_m,
        }
    }
}

/// Relative error of the small-angle reading theta ~ (x - x0) / (2 L) on a flat screen at twist `theta`:
/// tan(2 theta) / (2 theta) - 1, about (4/3) theta^2 (1.3e-7 at 0.3 mrad, 3.3e-3 at 50 mrad).
pub fn small_angle_error(theta: Radians) -> f64 {
    let t = theta.0;
    if t.abs() < 1e-12 {
        0.0
    } else {
        (2.0 * t).tan() / (2.0 * t) - 1.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn angle_and_reading_invert() {
        for shape in [ScaleShape::Flat, ScaleShape::Curved] {
            let lever = Lever {
                distance_m: 2.5,
                zero_m: 0.01,
                shape,
            };
            for x in [-0.3, -0.01, 0.0, 0.02, 0.25] {
                let back = lever.reading(lever.angle(x));
                assert!((back - x).abs() < 1e-12, "{shape:?} {x} {back}");
            }
        }
    }

    #[test]
    fn small_angle_error_is_about_four_thirds_theta_squared() {
        let t = Radians(0.01);
        assert!((small_angle_error(t) / (4.0 / 3.0 * 1e-4) - 1.0).abs() < 1e-3);
    }
}
