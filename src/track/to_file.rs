//! A whole tracking run into a track file: what `spotlever track` and the demo both do.

use super::drive::run_tracker;
use super::error::TrackRunError;
use super::screen::ScreenMap;
use super::summary::RunSummary;
use super::write::TrackWriter;
use crate::frame::Roi;
use crate::source::{FrameSource, SourceInfo};
use crate::spot::{SpotConfig, Tracker};
use std::path::Path;

/// The spot finder's settings for a run looking only inside `roi`. Where the source already cut the
/// pictures to the ROI (ffmpeg does, so fewer bytes cross the pipe), the finder uses all of each plane;
/// otherwise it looks inside the ROI itself.
pub fn spot_config_for(info: &SourceInfo, roi: Option<Roi>) -> SpotConfig {
    let finder_roi = if info.crop.is_some() { None } else { roi };
    SpotConfig {
        roi: finder_roi,
        ..SpotConfig::default()
    }
}

/// Track every frame of `source` with `spot`, map positions by `screen` and write the rows to a new
/// track file at `out` (with `x_mm,y_mm` columns when `screen` has a calibration). `progress` is called
/// after each row. The file is flushed before the summary is returned.
pub fn track_to_file(
    source: &mut dyn FrameSource,
    spot: SpotConfig,
    screen: &ScreenMap,
    out: &Path,
    progress: impl FnMut(&RunSummary),
) -> Result<RunSummary, TrackRunError> {
    let mut tracker = Tracker::new(spot);
    let mut writer = TrackWriter::create(out, screen.has_mm())?;
    let summary = run_tracker::<TrackRunError>(
        source,
        &mut tracker,
        screen,
        |row, _| {
            writer.write(row).map_err(|source| TrackRunError::Write {
                frame: row.frame,
                source,
            })
        },
        progress,
    )?;
    writer.flush()?;
    Ok(summary)
}
