//! One frame's row of the track, the hand-off between tracking and analysis, and the track file's
//! column layout shared by its writer and its reader.

use crate::spot::SpotFix;
use crate::units::{ScreenPoint, Seconds};

/// Columns every track file has, in order; `x_mm,y_mm` follow when a calibration was used.
pub(super) const BASE_COLUMNS: [&str; 10] = [
    "frame",
    "t_s",
    "x_px",
    "y_px",
    "peak",
    "integral",
    "width_px",
    "saturated_px",
    "snr",
    "status",
];

/// One frame's row.
#[derive(Debug, Clone, PartialEq)]
pub struct TrackRow {
    pub frame: u64,
    pub t: Seconds,
    pub fix: SpotFix,
    /// Screen position, when a calibration was given and the spot was found.
    pub screen: Option<ScreenPoint>,
}
