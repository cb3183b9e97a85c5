//! Pixels to screen millimetres for the track: the one place a spot's image position becomes a
//! screen position, for every command and the live loop alike.
//!
//! Later corrections of the camera's picture belong here too: a lens-distortion model (undistort the
//! pixel position before the homography) and a re-registration of a camera that moved (a correction
//! homography fitted during the run) hook in at [`ScreenMap::map`], so that every stage downstream keeps
//! seeing plain screen millimetres.

use crate::calib::{CalibError, Calibration};
use crate::units::{PixelPoint, ScreenPoint};

/// The mapping of a run: none (positions stay in pixels) or a screen calibration.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ScreenMap {
    calibration: Option<Calibration>,
}

impl ScreenMap {
    /// No calibration: rows carry pixel positions only.
    pub fn none() -> Self {
        Self::default()
    }

    /// Map with `calibration` when there is one.
    pub fn new(calibration: Option<Calibration>) -> Self {
        Self { calibration }
    }

    /// Map with `calibration`, after checking it was made for frames of this size.
    pub fn for_frames(
        calibration: Calibration,
        width: usize,
        height: usize,
    ) -> Result<Self, CalibError> {
        calibration.check_image_size(width as u32, height as u32)?;
        Ok(Self::new(Some(calibration)))
    }

    /// Whether rows get screen positions (and the track file its `x_mm,y_mm` columns).
    pub fn has_mm(&self) -> bool {
        self.calibration.is_some()
    }

    pub fn calibration(&self) -> Option<&Calibration> {
        self.calibration.as_ref()
    }

    /// The screen position of an image point; `None` without a calibration, or for a point on the
    /// homography's horizon (the mapping is not finite there), which has no screen position.
    pub fn map(&self, p: PixelPoint) -> Option<ScreenPoint> {
        let c = self.calibration.as_ref()?;
        Some(c.to_screen(p)).filter(|s| s.x_mm.is_finite() && s.y_mm.is_finite())
    }

    /// [`ScreenMap::map`] of a position that may be missing.
    pub fn map_opt(&self, p: Option<PixelPoint>) -> Option<ScreenPoint> {
        p.and_then(|p| self.map(p))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::Matrix3;

    /// A homography whose horizon is the image line x = 0: (x, y) -> (1, y / x).
    fn horizon_at_x0() -> Calibration {
        let h = Matrix3::new(1.0, 0.0, 0.0, 0.0, 1.0, 0.0, 1.0, 0.0, 0.0);
        Calibration {
            image_width: 10,
            image_height: 10,
            h,
            h_inv: h,
            rms_px: 0.0,
            rms_mm: 0.0,
            points: 4,
            source_image: "test".into(),
            created: String::new(),
            notes: String::new(),
        }
    }

    #[test]
    fn without_calibration_nothing_is_mapped() {
        let m = ScreenMap::none();
        assert!(!m.has_mm());
        assert_eq!(m.map(PixelPoint { x: 1.0, y: 2.0 }), None);
    }

    #[test]
    fn finite_points_map_as_the_calibration_does_and_the_horizon_has_no_position() {
        let c = horizon_at_x0();
        let m = ScreenMap::new(Some(c.clone()));
        let p = PixelPoint { x: 2.0, y: 3.0 };
        assert_eq!(m.map(p), Some(c.to_screen(p)));
        assert_eq!(
            m.map(p),
            Some(ScreenPoint {
                x_mm: 1.0,
                y_mm: 1.5
            })
        );
        let on = PixelPoint { x: 0.0, y: 3.0 };
        assert!(!c.to_screen(on).x_mm.is_finite());
        assert_eq!(m.map(on), None);
        assert_eq!(m.map_opt(None), None);
    }

    #[test]
    fn frames_of_another_size_are_refused() {
        assert!(ScreenMap::for_frames(horizon_at_x0(), 10, 10).is_ok());
        assert!(ScreenMap::for_frames(horizon_at_x0(), 12, 10).is_err());
    }
}
