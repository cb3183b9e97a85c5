//! The scene synthesizer: ruled screens seen in perspective with a laser spot, with the truth alongside,
//! for tests, benchmarks and the bundled demo frames.
//!
//! Two renderers share one sensor model ([`Sensor`]: optional blur, additive Gaussian noise, rounding
//! and clipping to the white level):
//!
//! - [`render_scene`] draws a [`Scene`]: a [`RuledScreen`] (square grid of dark lines on paper, unevenly
//!   lit) seen through a homography from screen millimetres to image pixels, plus an optional
//!   [`LaserSpot`] (Gaussian, optional speckle, any peak, clipped by the sensor). It returns the
//!   [`Plane`](crate::frame::Plane) and the [`Truth`] (spot centre in pixels and millimetres).
//!   [`CameraView`] builds the homography from a simple pinhole camera (scale, tilts, roll).
//! - [`render_flat_spot`] draws a [`FlatSpot`]: a point-sampled Gaussian on a flat background, the
//!   model used for Cramér–Rao comparisons.
//!
//! Everything is deterministic given the seed passed in (and the speckle seed of the spot).

mod flat;
pub mod motion;
mod scene;
mod sensor;
mod view;

pub use flat::{render_flat_spot, FlatSpot};
pub use scene::{render_scene, Illumination, LaserSpot, RuledScreen, Scene, Speckle, Truth};
pub use sensor::Sensor;
pub use view::{map_point, CameraView};

use thiserror::Error;

/// A scene description that cannot be rendered.
#[derive(Debug, Error, PartialEq)]
pub enum SynthError {
    #[error(
        "image size {width}x{height} is empty; give both a width and a height of at least 1 px"
    )]
    EmptyImage { width: usize, height: usize },
    #[error("{name} = {value} is not allowed: {why}")]
    BadParameter {
        name: &'static str,
        value: f64,
        why: &'static str,
    },
    #[error("the screen-to-image homography is singular or not finite; check the camera view")]
    SingularHomography,
}

/// Reject a parameter that is not finite or lies below `min`.
pub(crate) fn check_at_least(name: &'static str, value: f64, min: f64) -> Result<(), SynthError> {
    if !value.is_finite() {
        return Err(SynthError::BadParameter {
            name,
            value,
            why: "it must be a finite number",
        });
    }
    if value < min {
        return Err(SynthError::BadParameter {
            name,
            value,
            why: if min == 0.0 {
                "it must not be negative"
            } else {
                "it is below the smallest allowed value"
            },
        });
    }
    Ok(())
}

/// Reject an image size with a zero side.
pub(crate) fn check_size(width: usize, height: usize) -> Result<(), SynthError> {
    if width == 0 || height == 0 {
        return Err(SynthError::EmptyImage { width, height });
    }
    Ok(())
}
