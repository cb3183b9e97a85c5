//! What a person asks of a recording, as plain values (the command line's options), turned into a
//! session's configuration and the opener of its source. Every value is checked, and the source
//! opened once, before the run folder is touched.

use super::feed::Opener;
use super::input::Controls;
use super::run_dir::Existing;
use super::session::{Display, SessionConfig};
use super::sources::{camera_plan, replay_plan};
use super::RecordError;
use crate::calib::Calibration;
use crate::frame::Channel;
use crate::source::camera::CameraChoice;
use crate::spot::SpotConfig;
use std::path::PathBuf;
use std::time::Duration;

/// A recording as asked for.
#[derive(Debug, Clone, PartialEq)]
pub struct RecordRequest {
    /// Run folder to write.
    pub out: PathBuf,
    pub existing: Existing,
    /// Replay this video or image sequence; `None`: read a camera.
    pub replay: Option<PathBuf>,
    /// The camera to read (default: camera 0).
    pub camera: Option<CameraChoice>,
    /// Image size to ask of the camera, as `WIDTHxHEIGHT` text.
    pub resolution: Option<String>,
    /// Frame rate to ask of the camera, or of an image sequence without times.
    pub fps: Option<f64>,
    /// Replay pace: a factor of the recorded pace, or "max".
    pub speed: String,
    pub channel: Channel,
    /// Calibration file, for millimetre columns.
    pub calib: Option<PathBuf>,
    /// Keep every Nth frame as JPEG (0: none).
    pub keep_every: u64,
    /// Stop after this much run time, s.
    pub duration_s: Option<f64>,
    /// Status line interval without a terminal, s.
    pub status_every_s: f64,
    /// Mark a gap when a camera sent no frame for this long, s.
    pub stall_after_s: f64,
    /// Whether standard input and output are both a terminal: the full display with keys; else
    /// status lines, and commands typed on standard input.
    pub interactive: bool,
}

/// A checked recording, ready for [`super::session::record`].
pub struct Prepared {
    pub config: SessionConfig,
    pub opener: Opener,
}

/// `WIDTHxHEIGHT` (either case of x), both positive.
pub fn parse_resolution(s: &str) -> Result<(u32, u32), RecordError> {
    let bad = || RecordError::BadResolution { text: s.into() };
    let (w, h) = s.split_once(['x', 'X']).ok_or_else(bad)?;
    let w: u32 = w.trim().parse().ok().filter(|v| *v > 0).ok_or_else(bad)?;
    let h: u32 = h.trim().parse().ok().filter(|v| *v > 0).ok_or_else(bad)?;
    Ok((w, h))
}

fn positive(option: &'static str, value: f64) -> Result<f64, RecordError> {
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(RecordError::NotPositive { option, value })
    }
}

/// Check the request, load the calibration, open the source once, and say how the session runs.
pub fn prepare(req: RecordRequest) -> Result<Prepared, RecordError> {
    let resolution = req
        .resolution
        .as_deref()
        .map(parse_resolution)
        .transpose()?;
    let fps = req.fps.map(|f| positive("--fps", f)).transpose()?;
    if let Some(d) = req.duration_s {
        positive("--duration", d)?;
    }
    let status_every = positive("--status-every", req.status_every_s)?;
    let stall_after = positive("--stall-after", req.stall_after_s)?;
    let calibration = match &req.calib {
        Some(p) => {
            let c = Calibration::load(p)?;
            Some((p.display().to_string(), c))
        }
        None => None,
    };
    let plan = match &req.replay {
        Some(path) => replay_plan(path, resolution, &req.speed, req.channel, fps)?,
        None => camera_plan(
            req.camera.clone().unwrap_or(CameraChoice::Index(0)),
            resolution,
            fps,
            req.channel,
        )?,
    };
    if let Some((p, c)) = &calibration {
        c.check_image_size(plan.size.0, plan.size.1)
            .map_err(|error| RecordError::CalibrationSize {
                path: p.clone(),
                error,
            })?;
    }
    let (display, controls) = if req.interactive {
        (Display::Terminal, Controls::Keys)
    } else {
        (
            Display::Lines {
                every: Duration::from_secs_f64(status_every),
            },
            Controls::stdin_lines(),
        )
    };
    let config = SessionConfig {
        out: req.out,
        existing: req.existing,
        source_kind: plan.kind.to_string(),
        source_name: plan.name,
        fps_requested: if plan.kind == "camera" { fps } else { None },
        frame_interval_s: plan.frame_interval_s,
        channel: req.channel,
        calibration,
        spot: SpotConfig::default(),
        keep_every: req.keep_every,
        display,
        controls,
        duration_s: req.duration_s,
        on_fault: plan.on_fault,
        stall_after: Duration::from_secs_f64(stall_after),
        run_per_wall: plan.run_per_wall,
        clock_times: plan.clock_times,
    };
    Ok(Prepared {
        config,
        opener: plan.opener,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn resolution_text() {
        assert_eq!(parse_resolution("1280x720").unwrap(), (1280, 720));
        assert_eq!(parse_resolution("640X480").unwrap(), (640, 480));
        for bad in ["1280", "0x720", "ax720", "1280x"] {
            let e = parse_resolution(bad).unwrap_err().to_string();
            assert!(e.contains("WIDTHxHEIGHT"), "{e}");
        }
    }
}
