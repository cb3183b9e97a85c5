//! `spotlever record`: record a live run from a camera, or replay a recording through the same loop.

use anyhow::bail;
use clap::Args;
use spotlever::frame::Channel;
use spotlever::outfile::Outputs;
use spotlever::record::input::install_stop_signals;
use spotlever::record::request::{prepare, RecordRequest};
use spotlever::record::run_dir::{Existing, RUN_FILES};
use spotlever::record::session;
use spotlever::source::camera::{self, CameraChoice, CameraError};
use std::io::IsTerminal;
use std::path::PathBuf;

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

fn list_cameras() -> anyhow::Result<()> {
    let cams = camera::list_cameras()?;
    if cams.is_empty() {
        return Err(CameraError::NoneFound {
            detail: String::new(),
        }
        .into());
    }
    for c in cams {
        println!("{}  {}  ({})", c.index, c.name, c.description);
    }
    Ok(())
}

pub fn run(args: RecordArgs, mut outputs: Outputs) -> anyhow::Result<()> {
    if args.list_cameras {
        return list_cameras();
    }
    let Some(out) = args.out else {
        bail!("give the run folder with --out RUN_DIR");
    };
    for p in args.source.iter().chain(&args.calib) {
        outputs.input(p);
    }
    outputs.claim_in(&out, RUN_FILES, "--out")?;
    let existing = if args.append {
        Existing::Append
    } else if args.force {
        Existing::Replace
    } else {
        Existing::Refuse
    };
    let interactive = std::io::stdout().is_terminal() && std::io::stdin().is_terminal();
    let prepared = prepare(RecordRequest {
        out,
        existing,
        replay: args.source,
        camera: args.camera,
        resolution: args.resolution,
        fps: args.fps,
        speed: args.speed,
        channel: args.channel,
        calib: args.calib,
        keep_every: args.keep_every,
        duration_s: args.duration,
        status_every_s: args.status_every,
        stall_after_s: args.stall_after,
        interactive,
    })?;
    if !install_stop_signals() {
        eprintln!("warning: cannot catch Ctrl-C; stop with 'q' to close the run cleanly");
    }
    if !interactive {
        let cfg = &prepared.config;
        println!(
            "recording {} into {}; type 'm [LABEL]' + Enter to mark a mass move, 'q' + Enter to stop",
            cfg.source_name,
            cfg.out.display()
        );
    }
    let summary = session::record(prepared.config, prepared.opener)?;
    println!("{summary}");
    Ok(())
}
