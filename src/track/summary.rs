//! What a tracking run counted: frames by status, wall time, and why frames were unreadable.

use crate::source::SourceError;
use crate::spot::SpotStatus;
use std::time::Duration;

/// Counts of a finished (or stopped) run.
#[derive(Debug, Default)]
pub struct RunSummary {
    pub frames: u64,
    pub ok: u64,
    pub saturated: u64,
    pub lost: u64,
    pub weak: u64,
    pub ambiguous: u64,
    pub unreadable: u64,
    pub elapsed: Duration,
    /// Why some frames were unreadable (the first few).
    pub unreadable_notes: Vec<String>,
    /// Set when the source stopped early but the rows before are good (a truncated video).
    pub stopped: Option<SourceError>,
}

impl RunSummary {
    /// Frames per second of wall time.
    pub fn speed(&self) -> f64 {
        self.frames as f64 / self.elapsed.as_secs_f64().max(1e-9)
    }

    pub(super) fn count(&mut self, status: SpotStatus) {
        self.frames += 1;
        match status {
            SpotStatus::Ok => self.ok += 1,
            SpotStatus::Saturated => self.saturated += 1,
            SpotStatus::Lost => self.lost += 1,
            SpotStatus::Weak => self.weak += 1,
            SpotStatus::Ambiguous => self.ambiguous += 1,
            SpotStatus::Unreadable => self.unreadable += 1,
        }
    }
}

impl std::fmt::Display for RunSummary {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{} frames in {:.1} s ({:.1} frames/s): {} ok, {} saturated, {} lost, {} weak, {} ambiguous, {} unreadable",
            self.frames,
            self.elapsed.as_secs_f64(),
            self.speed(),
            self.ok,
            self.saturated,
            self.lost,
            self.weak,
            self.ambiguous,
            self.unreadable
        )
    }
}
