//! What a session is told before it starts: where the run goes, what the source is, how to show
//! progress and when to stop.

use crate::calib::Calibration;
use crate::frame::Channel;
use crate::record::feed::OnFault;
use crate::record::input::Controls;
use crate::record::run_dir::Existing;
use crate::spot::SpotConfig;
use std::path::PathBuf;
use std::time::Duration;

/// How the session shows its progress.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Display {
    /// The full-screen terminal display, with keys.
    Terminal,
    /// A plain status line on standard output this often.
    Lines { every: Duration },
    /// Nothing (library use, benchmarks).
    Silent,
}

/// Everything a session needs besides the source.
pub struct SessionConfig {
    pub out: PathBuf,
    pub existing: Existing,
    /// "camera" or "replay", for the metadata.
    pub source_kind: String,
    /// Camera name or replayed path.
    pub source_name: String,
    pub fps_requested: Option<f64>,
    /// Nominal frame interval, for counting dropped frames from gaps in time.
    pub frame_interval_s: Option<f64>,
    pub channel: Channel,
    /// Calibration file name and its contents.
    pub calibration: Option<(String, Calibration)>,
    pub spot: SpotConfig,
    /// Keep every Nth frame as JPEG (0: none).
    pub keep_every: u64,
    pub display: Display,
    pub controls: Controls,
    /// Stop after this much run time, s.
    pub duration_s: Option<f64>,
    pub on_fault: OnFault,
    /// With retries: mark a gap when no frame came for this long.
    pub stall_after: Duration,
    /// Run seconds per wall-clock second while frames arrive (1 for a camera, the factor of a
    /// paced replay, 0 for a replay at full speed); dates events between frames.
    pub run_per_wall: f64,
    /// Whether the source's times are on the session's own monotonic clock (a camera): a continued run
    /// then places them by the wall clock since the run's first session, so the time axis stays true
    /// across the pause.
    pub clock_times: bool,
}
