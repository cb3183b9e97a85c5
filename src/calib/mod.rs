//! Screen calibration: the homography from image pixels to millimetres on the screen, fitted from point
//! pairs or from a detected ruled grid, and its calibration file.
//!
//! - [`file`]: the TOML calibration file (load, save, image-size check);
//! - [`error`]: what can go wrong, naming the file and line;
//! - [`homography`]: the fit from point pairs; [`pairs`]: the point-pair CSV;
//! - [`grid`]: finding a printed grid's intersections; [`report`]: the printed summary;
//! - [`overlay`]: the check picture.

pub mod error;
pub mod file;
pub mod grid;
pub mod homography;
pub mod overlay;
pub mod pairs;
pub mod report;

pub use error::CalibError;

use crate::units::{PixelPoint, ScreenPoint};
use nalgebra::Matrix3;

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

impl Calibration {
    /// Map an image point to the screen.
    pub fn to_screen(&self, p: PixelPoint) -> ScreenPoint {
        let (x_mm, y_mm) = homography::project(&self.h, p.x, p.y);
        ScreenPoint { x_mm, y_mm }
    }
    /// Map a screen point into the image.
    pub fn to_image(&self, s: ScreenPoint) -> PixelPoint {
        let (x, y) = homography::project(&self.h_inv, s.x_mm, s.y_mm);
        PixelPoint { x, y }
    }

    /// Refuse frames of another size than the calibration was made for: the mapping would be wrong.
    pub fn check_image_size(&self, width: u32, height: u32) -> Result<(), CalibError> {
        if width == self.image_width && height == self.image_height {
            Ok(())
        } else {
            Err(CalibError::ImageSize {
                calib_width: self.image_width,
                calib_height: self.image_height,
                width,
                height,
                source_image: self.source_image.clone(),
            })
        }
    }

    /// Screen scale at an image point, px per mm: the square root of the Jacobian determinant of the
    /// screen-to-image map there (geometric mean of the two local scales).
    pub fn px_per_mm_at(&self, p: PixelPoint) -> f64 {
        let s = self.to_screen(p);
        let d = 1e-3;
        let a = self.to_image(ScreenPoint {
            x_mm: s.x_mm + d,
            y_mm: s.y_mm,
        });
        let b = self.to_image(ScreenPoint {
            x_mm: s.x_mm - d,
            y_mm: s.y_mm,
        });
        let c = self.to_image(ScreenPoint {
            x_mm: s.x_mm,
            y_mm: s.y_mm + d,
        });
        let e = self.to_image(ScreenPoint {
            x_mm: s.x_mm,
            y_mm: s.y_mm - d,
        });
        let (jxx, jyx) = ((a.x - b.x) / (2.0 * d), (a.y - b.y) / (2.0 * d));
        let (jxy, jyy) = ((c.x - e.x) / (2.0 * d), (c.y - e.y) / (2.0 * d));
        (jxx * jyy - jxy * jyx).abs().sqrt()
    }

    /// Scale at the image centre, px per mm.
    pub fn px_per_mm_at_centre(&self) -> f64 {
        self.px_per_mm_at(PixelPoint {
            x: (self.image_width as f64 - 1.0) / 2.0,
            y: (self.image_height as f64 - 1.0) / 2.0,
        })
    }
}

impl Calibration {
    /// A calibration from a fitted homography, stamped with the current time.
    pub fn from_fit(
        fit: &homography::HomographyFit,
        image_width: u32,
        image_height: u32,
        source_image: &str,
        notes: &str,
    ) -> Calibration {
        Calibration {
            image_width,
            image_height,
            h: fit.h,
            h_inv: fit.h_inv,
            rms_px: fit.rms_px(),
            rms_mm: fit.rms_mm(),
            points: fit.used.len(),
            source_image: source_image.to_string(),
            created: file::utc_now_rfc3339(),
            notes: notes.to_string(),
        }
    }
}

/// A calibration fitted from point pairs, with the fit it came from (for its printed report).
#[derive(Debug, Clone)]
pub struct FittedCalibration {
    pub calibration: Calibration,
    pub fit: homography::HomographyFit,
}

/// Fit the screen homography to `pairs` (from a pairs file or from [`grid::detect`]), leaving out pairs
/// that disagree by more than `opts.threshold_px`, and make the calibration of `source_image`, an image
/// of `image_width` x `image_height` px. Used by `spotlever calibrate` and the demo alike.
pub fn fit_calibration(
    pairs: &[homography::PointPair],
    opts: &homography::RobustOptions,
    image_width: u32,
    image_height: u32,
    source_image: &str,
    notes: &str,
) -> Result<FittedCalibration, CalibError> {
    let fit = homography::fit_robust(pairs, opts)?;
    let calibration = Calibration::from_fit(&fit, image_width, image_height, source_image, notes);
    Ok(FittedCalibration { calibration, fit })
}
