//! `spotlever record`: record a live run from a camera, or replay a recording through the same loop.

use anyhow::{bail, Context};
use clap::Args;
use spotlever::calib::Calibration;
use spotlever::frame::Channel;
use spotlever::record::camera::{self, CameraChoice, CameraRequest};
use spotlever::record::feed::{OnFault, Opener};
use spotlever::record::input::{install_stop_signals, Controls};
use spotlever::record::run_dir::Existing;
use spotlever::record::session::{self, Display, SessionConfig};
use spotlever::record::RecordError;
use spotlever::source::replay::{Pace, ReplaySource};
use spotlever::source::{self, OpenOptions};
use spotlever::spot::SpotConfig;
use std::io::IsTerminal;
use std::path::PathBuf;
use std::time::{Duration, Instant};

/// On a terminal: `m` marks a mass move, `q` stops. Otherwise type `m [LABEL]` or `q` and Enter on
/// standard input. Ctrl-C (SIGINT) also stops cleanly.
#[derive(Debug, Args)]
#[command(
    after_help = "While recording on a terminal: m = mark a mass move, q = stop.\n\
Without a terminal, write lines to standard input: 'm [LABEL]' marks an event, 'q' stops.\n\
SIGINT or SIGTERM also stops cleanly and prints the summary.\n\
Laser safety: never look into the beam or its mirror reflection; follow your local laser rules."
)]
pub struct RecordArgs {
    /// Camera to use: its index (0 = first) or part of its name. Default: camera 0.
    #[arg(long, value_name = "INDEX|NAME", conflicts_with = "source")]
    pub camera: Option<CameraChoice>,
    /// List the cameras this machine has and exit.
    #[arg(long)]
    pub list_cameras: bool,
    /// Image size to ask of the camera, e.g. 1280x720 (the nearest offered is used).
    #[arg(long, value_name = "WxH")]
    pub resolution: Option<String>,
    /// Frame rate to ask of the camera; with --source, the frame rate of an image sequence that has
    /// no times.csv.
    #[arg(long, value_name = "F")]
    pub fps: Option<f64>,
    /// Colour channel the spot is found in.
    #[arg(long, value_enum, default_value_t = Channel::default(), value_name = "C")]
    pub channel: Channel,
    /// Calibration file (from 'spotlever calibrate'): adds x_mm,y_mm to the track.
    #[arg(long, value_name = "FILE")]
    pub calib: Option<PathBuf>,
    /// Keep every Nth frame as JPEG under RUN_DIR/frames (0: keep none).
    #[arg(long, value_name = "N", default_value_t = 30)]
    pub keep_every: u64,
    /// Replay a video or image sequence instead of reading a camera.
    #[arg(long, value_name = "FILE_OR_DIR")]
    pub source: Option<PathBuf>,
    /// Replay pace: a factor of the recorded pace (1 = as recorded) or 'max' (as fast as possible).
    #[arg(
        long,
        value_name = "FACTOR|max",
        default_value = "1",
        requires = "source"
    )]
    pub speed: String,
    /// Continue the run in RUN_DIR (times and frame numbers go on after its last row).
    #[arg(long, conflicts_with = "force")]
    pub append: bool,
    /// Delete the run in RUN_DIR and start again.
    #[arg(long)]
    pub force: bool,
    /// Stop after this many seconds of run time.
    #[arg(long, value_name = "SECONDS")]
    pub duration: Option<f64>,
    /// Without a terminal, print a status line this often, s.
    #[arg(long, value_name = "SECONDS", default_value_t = 5.0)]
    pub status_every: f64,
    /// With a camera: mark a gap in the track when no frame came for this long, s.
    #[arg(long, value_name = "SECONDS", default_value_t = 2.0)]
    pub stall_after: f64,
    /// Run folder to write.
    #[arg(long, value_name = "RUN_DIR", required_unless_present = "list_cameras")]
    pub out: Option<PathBuf>,
}

/// Where frames come from and how the session treats them.
struct Plan {
    opener: Opener,
    kind: &'static str,
    name: String,
    frame_interval_s: Option<f64>,
    on_fault: OnFault,
    run_per_wall: f64,
    clock_times: bool,
    size: (u32, u32),
}

fn parse_resolution(s: &str) -> anyhow::Result<(u32, u32)> {
    let bad = || format!("--resolution {s:?}: write it as WIDTHxHEIGHT, e.g. 1280x720");
    let (w, h) = s.split_once(['x', 'X']).with_context(bad)?;
    let w: u32 = w.trim().parse().ok().filter(|v| *v > 0).with_context(bad)?;
    let h: u32 = h.trim().parse().ok().filter(|v| *v > 0).with_context(bad)?;
    Ok((w, h))
}

fn positive(name: &str, v: f64) -> anyhow::Result<f64> {
    if v.is_finite() && v > 0.0 {
        Ok(v)
    } else {
        bail!("{name} {v} is not a positive number")
    }
}

fn list_cameras() -> anyhow::Result<()> {
    let cams = camera::list_cameras()?;
    if cams.is_empty() {
        return Err(RecordError::NoCamera {
            detail: String::new(),
        }
        .into());
    }
    for c in cams {
        println!("{}  {}  ({})", c.index, c.name, c.description);
    }
    Ok(())
}

pub fn run(args: RecordArgs) -> anyhow::Result<()> {
    if args.list_cameras {
        return list_cameras();
    }
    let Some(out) = args.out.clone() else {
        bail!("give the run folder with --out RUN_DIR");
    };
    let existing = if args.append {
        Existing::Append
    } else if args.force {
        Existing::Replace
    } else {
        Existing::Refuse
    };
    let resolution = args
        .resolution
        .as_deref()
        .map(parse_resolution)
        .transpose()?;
    let fps = args.fps.map(|f| positive("--fps", f)).transpose()?;
    if let Some(d) = args.duration {
        positive("--duration", d)?;
    }
    let status_every = positive("--status-every", args.status_every)?;
    let stall_after = positive("--stall-after", args.stall_after)?;
    let calibration = match &args.calib {
        Some(p) => {
            let c = Calibration::load(p)?;
            Some((p.display().to_string(), c))
        }
        None => None,
    };

    let plan = match &args.source {
        Some(path) => {
            if resolution.is_some() {
                bail!("--resolution applies to cameras only; a replay keeps its recorded size");
            }
            let pace: Pace = args.speed.parse()?;
            let opts = OpenOptions {
                channel: args.channel,
                fps,
                ..OpenOptions::default()
            };
            // Open once here so a bad path is reported before the run folder is touched.
            let probe = source::open(path, &opts)?;
            let size = (probe.info().width as u32, probe.info().height as u32);
            drop(probe);
            let p = path.clone();
            let opener: Opener = Box::new(move || {
                let s = source::open(&p, &opts)?;
                Ok(Box::new(ReplaySource::new(s, pace)) as Box<dyn source::FrameSource>)
            });
            let per_wall = match pace {
                Pace::Factor(f) => f,
                Pace::Max => 0.0,
            };
            Plan {
                opener,
                kind: "replay",
                name: path.display().to_string(),
                frame_interval_s: None,
                on_fault: OnFault::Stop,
                run_per_wall: per_wall,
                clock_times: false,
                size,
            }
        }
        None => {
            if !camera::CAMERA_SUPPORT {
                return Err(RecordError::NoCameraSupport.into());
            }
            let req = CameraRequest {
                choice: args.camera.clone().unwrap_or(CameraChoice::Index(0)),
                resolution,
                fps: fps.map(|f| f.round().max(1.0) as u32),
                channel: args.channel,
            };
            let (cam_name, w, h, cam_fps) = camera::describe_camera(&req)?;
            let clock = Instant::now();
            let opener: Opener = Box::new(move || camera::open_camera(&req, clock));
            Plan {
                opener,
                kind: "camera",
                name: cam_name,
                frame_interval_s: cam_fps.map(|f| 1.0 / f),
                on_fault: OnFault::Retry {
                    every: Duration::from_secs(1),
                },
                run_per_wall: 1.0,
                clock_times: true,
                size: (w, h),
            }
        }
    };
    let Plan {
        opener,
        kind,
        name,
        frame_interval_s,
        on_fault,
        run_per_wall,
        clock_times,
        size,
    } = plan;
    if let Some((p, c)) = &calibration {
        c.check_image_size(size.0, size.1)
            .with_context(|| format!("--calib {p}"))?;
    }

    let interactive = std::io::stdout().is_terminal() && std::io::stdin().is_terminal();
    let (display, controls) = if interactive {
        (Display::Terminal, Controls::Keys)
    } else {
        (
            Display::Lines {
                every: Duration::from_secs_f64(status_every),
            },
            Controls::stdin_lines(),
        )
    };
    if !install_stop_signals() {
        eprintln!("warning: cannot catch Ctrl-C; stop with 'q' to close the run cleanly");
    }
    if !interactive {
        println!(
            "recording {name} into {}; type 'm [LABEL]' + Enter to mark a mass move, 'q' + Enter to stop",
            out.display()
        );
    }
    let summary = session::record(
        SessionConfig {
            out,
            existing,
            source_kind: kind.to_string(),
            source_name: name,
            fps_requested: if kind == "camera" { fps } else { None },
            frame_interval_s,
            channel: args.channel,
            calibration,
            spot: SpotConfig::default(),
            keep_every: args.keep_every,
            display,
            controls,
            duration_s: args.duration,
            on_fault,
            stall_after: Duration::from_secs_f64(stall_after),
            run_per_wall,
            clock_times,
        },
        opener,
    )?;
    println!("{summary}");
    Ok(())
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
