//! Screen calibration: the homography from image pixels to millimetres on the screen, fitted from point
//! pairs or from a detected ruled grid, and its calibration file.

use crate::units::{PixelPoint, ScreenPoint};
use nalgebra::{Matrix3, Vector3};

/// A fitted image-to-screen mapping, as stored in a calibration file.
#[derive(Debug, Clone, PartialEq)]
pub struct Calibration {
    /// Size of the images it was made for, px.
    pub image_width: u32,
    pub image_height: u32,
    /// Homography taking homogeneous pixel coordinates to homogeneous screen millimetres.
    pub h: Matrix3<f64>,
    /// Its inverse (screen mm to pixels).
    pub h_inv: Matrix3<f64>,
    /// RMS reprojection error of the points used, px and mm.
    pub rms_px: f64,
    pub rms_mm: f64,
    /// Number of points used in the fit.
    pub points: usize,
    /// The image it was made from.
    pub source_image: String,
    /// When it was made (RFC 3339, UTC).
    pub created: String,
    /// Free text from the user.
    pub notes: String,
}

fn apply(h: &Matrix3<f64>, x: f64, y: f64) -> (f64, f64) {
    let v = h * Vector3::new(x, y, 1.0);
    (v.x / v.z, v.y / v.z)
}

impl Calibration {
    /// Map an image point to the screen.
    pub fn to_screen(&self, p: PixelPoint) -> ScreenPoint {
        let (x_mm, y_mm) = apply(&self.h, p.x, p.y);
        ScreenPoint { x_mm, y_mm }
    }
    /// Map a screen point into the image.
    pub fn to_image(&self, s: ScreenPoint) -> PixelPoint {
        let (x, y) = apply(&self.h_inv, s.x_mm, s.y_mm);
        PixelPoint { x, y }
    }
}
