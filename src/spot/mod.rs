//! The spot finder: where the reflected laser spot sits in one plane, to a fraction of a pixel, and how
//! much to trust it.
//!
//! [`Tracker`] is the stateful entry point used on a run (coarse search when the spot is unknown, then a
//! window around the predicted position, with a slowly following background estimate); [`locate`] is the
//! stateless one-shot search over a whole plane.

use crate::frame::Plane;
use crate::units::PixelPoint;
use serde::{Deserialize, Serialize};

/// How a located spot should be read.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum SpotStatus {
    /// A clean, unclipped spot.
    Ok,
    /// Found, but its core is clipped; the position comes from the unclipped wings.
    Saturated,
    /// No spot stands out of the background.
    Lost,
    /// Two comparable spots exist; the position is the stronger one's and should not be trusted.
    Ambiguous,
    /// The frame itself could not be decoded.
    Unreadable,
}

impl SpotStatus {
    pub fn as_str(self) -> &'static str {
        match self {
            SpotStatus::Ok => "ok",
            SpotStatus::Saturated => "saturated",
            SpotStatus::Lost => "lost",
            SpotStatus::Ambiguous => "ambiguous",
            SpotStatus::Unreadable => "unreadable",
        }
    }
    pub fn parse(s: &str) -> Option<Self> {
        Some(match s {
            "ok" => SpotStatus::Ok,
            "saturated" => SpotStatus::Saturated,
            "lost" => SpotStatus::Lost,
            "ambiguous" => SpotStatus::Ambiguous,
            "unreadable" => SpotStatus::Unreadable,
            _ => return None,
        })
    }
    /// Whether the position is usable for analysis.
    pub fn has_position(self) -> bool {
        matches!(self, SpotStatus::Ok | SpotStatus::Saturated)
    }
}

/// The finder's answer for one plane.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SpotFix {
    /// Subpixel centre; `None` when lost or unreadable.
    pub position: Option<PixelPoint>,
    /// Peak value above background, DN.
    pub peak: f64,
    /// Background-subtracted sum over the spot, DN.
    pub integral: f64,
    /// RMS radius of the spot, px.
    pub width_px: f64,
    /// Number of clipped pixels in the spot.
    pub saturated_px: u32,
    /// Peak over the background noise's standard deviation.
    pub snr: f64,
    pub status: SpotStatus,
}

impl SpotFix {
    /// The answer for a frame with nothing usable in it.
    pub fn without_position(status: SpotStatus) -> Self {
        Self {
            position: None,
            peak: 0.0,
            integral: 0.0,
            width_px: 0.0,
            saturated_px: 0,
            snr: 0.0,
            status,
        }
    }
}

/// A rectangle of the image, in whole pixels.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct Roi {
    pub x: usize,
    pub y: usize,
    pub width: usize,
    pub height: usize,
}

/// Settings of the spot finder.
#[derive(Debug, Clone, PartialEq)]
pub struct SpotConfig {
    /// Only look inside this rectangle.
    pub roi: Option<Roi>,
}

impl Default for SpotConfig {
    fn default() -> Self {
        Self { roi: None }
    }
}

/// One-shot search over the whole plane (or the configured ROI).
pub fn locate(_plane: &Plane, _config: &SpotConfig) -> SpotFix {
    todo!("spot finder")
}

/// Follows the spot frame to frame.
#[derive(Debug, Clone)]
pub struct Tracker {
    config: SpotConfig,
}

impl Tracker {
    pub fn new(config: SpotConfig) -> Self {
        Self { config }
    }
    /// Locate the spot in the next plane of the run.
    pub fn process(&mut self, plane: &Plane) -> SpotFix {
        locate(plane, &self.config)
    }
}
