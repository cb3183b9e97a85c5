//! The printed summary of a calibration fit: errors in px and mm, points used and rejected, scale.

use super::homography::{HomographyFit, PointPair};
use super::Calibration;
use std::fmt;

/// What a fit achieved, ready to print.
#[derive(Debug, Clone, PartialEq)]
pub struct FitSummary {
    pub rms_px: f64,
    pub max_px: f64,
    pub rms_mm: f64,
    pub max_mm: f64,
    pub points: usize,
    /// Labels of the pairs left out, with their pixel error under the final fit.
    pub rejected: Vec<(String, f64)>,
    /// Scale at the image centre, px per mm.
    pub px_per_mm_centre: f64,
}

impl FitSummary {
    pub fn new(fit: &HomographyFit, pairs: &[PointPair], calib: &Calibration) -> Self {
        let rejected = fit
            .rejected
            .iter()
            .map(|&i| {
                let p = &pairs[i];
                let q = calib.to_image(p.screen);
                let e = ((q.x - p.pixel.x).powi(2) + (q.y - p.pixel.y).powi(2)).sqrt();
                (p.label.clone(), e)
            })
            .collect();
        Self {
            rms_px: fit.rms_px(),
            max_px: fit.max_px(),
            rms_mm: fit.rms_mm(),
            max_mm: fit.max_mm(),
            points: fit.used.len(),
            rejected,
            px_per_mm_centre: calib.px_per_mm_at_centre(),
        }
    }
}

impl fmt::Display for FitSummary {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(f, "points used:          {}", self.points)?;
        writeln!(
            f,
            "reprojection error:   RMS {:.3} px, max {:.3} px",
            self.rms_px, self.max_px
        )?;
        writeln!(
            f,
            "on the screen:        RMS {:.4} mm, max {:.4} mm",
            self.rms_mm, self.max_mm
        )?;
        writeln!(
            f,
            "scale at image centre: {:.4} px/mm",
            self.px_per_mm_centre
        )?;
        for (label, e) in &self.rejected {
            writeln!(
                f,
                "rejected {label}: off by {e:.2} px from the fit of the others"
            )?;
        }
        Ok(())
    }
}
