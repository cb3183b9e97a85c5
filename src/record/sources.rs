//! Where a recording's frames come from: a camera, or a replayed recording at its pace. Each is
//! opened once beforehand, so a wrong path or a missing camera is reported before the run folder is
//! touched; the plan says how the session treats the frames (retries, pacing, clock).

use super::feed::{OnFault, Opener};
use super::RecordError;
use crate::frame::Channel;
use crate::source::camera::{self, CameraChoice, CameraError, CameraRequest};
use crate::source::replay::{Pace, ReplaySource};
use crate::source::{self, FrameSource, OpenOptions};
use std::path::Path;
use std::time::{Duration, Instant};

/// Where frames come from and how the session treats them.
pub struct SourcePlan {
    /// Opens (and reopens) the source in the reading thread.
    pub opener: Opener,
    /// "camera" or "replay".
    pub kind: &'static str,
    /// Camera name or replayed path.
    pub name: String,
    /// Nominal frame interval (a camera's frame rate), s.
    pub frame_interval_s: Option<f64>,
    pub on_fault: OnFault,
    /// Run seconds per wall-clock second (see [`super::session::SessionConfig::run_per_wall`]).
    pub run_per_wall: f64,
    /// Whether frame times are on the session's own clock (a camera).
    pub clock_times: bool,
    /// Picture width and height, px.
    pub size: (u32, u32),
}

/// Replay the video or image sequence at `path` at the pace `speed` (a factor, or "max").
pub fn replay_plan(
    path: &Path,
    resolution: Option<(u32, u32)>,
    speed: &str,
    channel: Channel,
    fps: Option<f64>,
) -> Result<SourcePlan, RecordError> {
    if resolution.is_some() {
        return Err(RecordError::ResolutionForReplay);
    }
    let pace: Pace = speed.parse()?;
    let opts = OpenOptions {
        channel,
        fps,
        ..OpenOptions::default()
    };
    // Open once here so a bad path is reported before the run folder is touched.
    let probe = source::open(path, &opts).map_err(RecordError::Open)?;
    let size = (probe.info().width as u32, probe.info().height as u32);
    drop(probe);
    let p = path.to_path_buf();
    let opener: Opener = Box::new(move || {
        let s = source::open(&p, &opts)?;
        Ok(Box::new(ReplaySource::new(s, pace)) as Box<dyn FrameSource>)
    });
    let per_wall = match pace {
        Pace::Factor(f) => f,
        Pace::Max => 0.0,
    };
    Ok(SourcePlan {
        opener,
        kind: "replay",
        name: path.display().to_string(),
        frame_interval_s: None,
        on_fault: OnFault::Stop,
        run_per_wall: per_wall,
        clock_times: false,
        size,
    })
}

/// Read the camera `choice`, asking for this size and frame rate; reopened every second after a
/// fault.
pub fn camera_plan(
    choice: CameraChoice,
    resolution: Option<(u32, u32)>,
    fps: Option<f64>,
    channel: Channel,
) -> Result<SourcePlan, RecordError> {
    if !camera::CAMERA_SUPPORT {
        return Err(CameraError::NoSupport.into());
    }
    let req = CameraRequest {
        choice,
        resolution,
        fps: fps.map(|f| f.round().max(1.0) as u32),
        channel,
    };
    let facts = camera::describe_camera(&req)?;
    let clock = Instant::now();
    let opener: Opener = Box::new(move || camera::open_camera(&req, clock));
    Ok(SourcePlan {
        opener,
        kind: "camera",
        name: facts.name,
        frame_interval_s: facts.fps.map(|f| 1.0 / f),
        on_fault: OnFault::Retry {
            every: Duration::from_secs(1),
        },
        run_per_wall: 1.0,
        clock_times: true,
        size: (facts.width, facts.height),
    })
}
