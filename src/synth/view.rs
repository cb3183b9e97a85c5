//! A simple pinhole camera looking at the screen, turned into the screen-mm to image-px homography the
//! renderer uses.

use super::{check_at_least, SynthError};
use crate::units::{PixelPoint, ScreenPoint};
use nalgebra::{Matrix3, Rotation3, Vector3};

/// Where the camera is and how it looks at the screen.
///
/// The screen lies in the plane Z = 0 with x to the right and y downwards (as in the image when the
/// camera is square on). The camera's optical axis passes through `look_at` on the screen, which lands on
/// `image_centre`; at that point a fronto-parallel view would show `px_per_mm` pixels per millimetre.
/// The camera is then turned by `tilt_x_deg` about the screen's x axis, `tilt_y_deg` about its y axis and
/// `roll_deg` about the optical axis (applied in that order: roll last).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CameraView {
    pub look_at: ScreenPoint,
    pub image_centre: PixelPoint,
    pub px_per_mm: f64,
    /// Focal length in pixels; sets how strong the perspective is (larger = weaker).
    pub focal_px: f64,
    pub tilt_x_deg: f64,
    pub tilt_y_deg: f64,
    pub roll_deg: f64,
}

impl CameraView {
    /// A square-on view of `look_at` at `px_per_mm`, centred in a `width` x `height` image, with a
    /// focal length of 1.2 image widths.
    pub fn square_on(look_at: ScreenPoint, px_per_mm: f64, width: usize, height: usize) -> Self {
        Self {
            look_at,
            image_centre: PixelPoint {
                x: (width as f64 - 1.0) / 2.0,
                y: (height as f64 - 1.0) / 2.0,
            },
            px_per_mm,
            focal_px: 1.2 * width as f64,
            tilt_x_deg: 0.0,
            tilt_y_deg: 0.0,
            roll_deg: 0.0,
        }
    }

    /// The homography taking homogeneous screen millimetres (x_mm, y_mm, 1) to homogeneous pixels.
    pub fn homography(&self) -> Result<Matrix3<f64>, SynthError> {
        check_at_least("view.px_per_mm", self.px_per_mm, f64::MIN_POSITIVE)?;
        check_at_least("view.focal_px", self.focal_px, f64::MIN_POSITIVE)?;
        for (name, v) in [
            ("view.tilt_x_deg", self.tilt_x_deg),
            ("view.tilt_y_deg", self.tilt_y_deg),
            ("view.roll_deg", self.roll_deg),
        ] {
            if !v.is_finite() || (v.abs() >= 80.0 && name != "view.roll_deg") {
                return Err(SynthError::BadParameter {
                    name,
                    value: v,
                    why: "tilts must be finite and below 80 degrees",
                });
            }
        }
        // Camera coordinates: p_c = R (P - C) + (0, 0, D), so the screen point C sits on the optical axis
        // at distance D = f / scale. Pixels: K p_c with K = [[f, 0, u0], [0, f, v0], [0, 0, 1]].
        let f = self.focal_px;
        let d = f / self.px_per_mm;
        let r = Rotation3::from_axis_angle(&Vector3::z_axis(), self.roll_deg.to_radians())
            * Rotation3::from_axis_angle(&Vector3::y_axis(), self.tilt_y_deg.to_radians())
            * Rotation3::from_axis_angle(&Vector3::x_axis(), self.tilt_x_deg.to_radians());
        let rm = r.matrix();
        let c = Vector3::new(self.look_at.x_mm, self.look_at.y_mm, 0.0);
        let t = -(rm * c) + Vector3::new(0.0, 0.0, d);
        let rt = Matrix3::from_columns(&[rm.column(0).into_owned(), rm.column(1).into_owned(), t]);
        let k = Matrix3::new(
            f,
            0.0,
            self.image_centre.x,
            0.0,
            f,
            self.image_centre.y,
            0.0,
            0.0,
            1.0,
        );
        let h = k * rt;
        if !h.iter().all(|v| v.is_finite()) || h.determinant().abs() < 1e-300 {
            return Err(SynthError::SingularHomography);
        }
        Ok(h)
    }
}

/// Apply a homography to a point: `(x, y) -> (h (x, y, 1))` dehomogenised. `None` when the point maps
/// to infinity (behind or level with the camera).
pub fn map_point(h: &Matrix3<f64>, x: f64, y: f64) -> Option<(f64, f64)> {
    let v = h * Vector3::new(x, y, 1.0);
    if v.z.abs() < 1e-12 || !v.z.is_finite() {
        return None;
    }
    Some((v.x / v.z, v.y / v.z))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn square_on_view_is_a_scale_and_shift() {
        let v = CameraView::square_on(
            ScreenPoint {
                x_mm: 10.0,
                y_mm: 5.0,
            },
            4.0,
            101,
            51,
        );
        let h = v.homography().unwrap();
        let (x, y) = map_point(&h, 10.0, 5.0).unwrap();
        assert!((x - 50.0).abs() < 1e-9 && (y - 25.0).abs() < 1e-9);
        let (x, y) = map_point(&h, 11.0, 7.0).unwrap();
        assert!((x - 54.0).abs() < 1e-9 && (y - 33.0).abs() < 1e-9);
    }

    #[test]
    fn tilt_foreshortens_one_side() {
        let mut v = CameraView::square_on(ScreenPoint::default(), 4.0, 1000, 1000);
        v.tilt_y_deg = 30.0;
        let h = v.homography().unwrap();
        let (xl, _) = map_point(&h, -50.0, 0.0).unwrap();
        let (xr, _) = map_point(&h, 50.0, 0.0).unwrap();
        let (x0, _) = map_point(&h, 0.0, 0.0).unwrap();
        // Perspective: equal screen steps either side of the centre no longer look equal.
        assert!(((x0 - xl) - (xr - x0)).abs() > 1.0);
        assert!(v.px_per_mm > 0.0);
        v.tilt_x_deg = f64::NAN;
        assert!(v.homography().is_err());
    }
}
