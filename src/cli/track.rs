//! `spotlever track`: follow the spot through an image sequence or a video and write the track file.

use anyhow::Context;
use clap::Args;
use indicatif::{ProgressBar, ProgressStyle};
use spotlever::calib::Calibration;
use spotlever::frame::Channel;
use spotlever::outfile::Outputs;
use spotlever::source::{open, OpenOptions, SourceInfo, VideoDecoder};
use spotlever::spot::Roi;
use spotlever::track::{spot_config_for, track_to_file, ScreenMap, TRACK_KIND};
use spotlever::units::Seconds;
use std::io::IsTerminal;
use std::path::PathBuf;

#[derive(Debug, Args)]
pub struct TrackArgs {
    /// A folder of images, a pattern such as 'frames/*.png', or a video file.
    pub input: PathBuf,
    /// Screen calibration (from 'spotlever calibrate'): adds x_mm,y_mm columns.
    #[arg(long, value_name = "FILE")]
    pub calib: Option<PathBuf>,
    /// Times of an image sequence, CSV 'file,t_s' (default: times.csv beside the images).
    #[arg(long, value_name = "FILE", conflicts_with = "fps")]
    pub times: Option<PathBuf>,
    /// Frame rate of an image sequence without a times file.
    #[arg(long, value_name = "F")]
    pub fps: Option<f64>,
    /// Keep at most one frame per interval of this many seconds.
    #[arg(long, value_name = "SECONDS")]
    pub every: Option<f64>,
    /// Colour channel to track in (a red laser shows best in red).
    #[arg(long, value_enum, default_value_t = Channel::Luma)]
    pub channel: Channel,
    /// Only look inside this rectangle of the image, in pixels. Videos read by ffmpeg are cut to it
    /// before the pictures reach spotlever, which is faster (a band along the scale is enough for an
    /// optical lever); positions are still whole-picture pixels.
    #[arg(long, value_name = "X,Y,W,H")]
    pub roi: Option<Roi>,
    /// Which video decoder to use.
    #[arg(long, value_enum, default_value_t = VideoDecoder::Auto)]
    pub decoder: VideoDecoder,
    /// The track file to write (CSV).
    #[arg(long, value_name = "FILE")]
    pub out: PathBuf,
}

fn check_roi(roi: &Roi, info: &SourceInfo) -> anyhow::Result<()> {
    if !roi.fits_in(info.width, info.height) {
        anyhow::bail!(
            "--roi {},{},{},{} reaches x = {}, y = {} but the image is {}x{}; give a rectangle inside the image",
            roi.x,
            roi.y,
            roi.width,
            roi.height,
            roi.x + roi.width,
            roi.y + roi.height,
            info.width,
            info.height
        );
    }
    Ok(())
}

fn progress_bar(len: Option<u64>) -> ProgressBar {
    if !std::io::stderr().is_terminal() {
        return ProgressBar::hidden();
    }
    let bar = match len {
        Some(n) => ProgressBar::new(n),
        None => ProgressBar::no_length(),
    };
    let style = ProgressStyle::with_template("{bar:40} {pos}/{len} frames  {per_sec}  ETA {eta}")
        .unwrap_or_else(|_| ProgressStyle::default_bar());
    bar.set_style(style);
    bar
}

pub fn run(args: TrackArgs, mut outputs: Outputs) -> anyhow::Result<()> {
    outputs.input(&args.input);
    for p in args.calib.iter().chain(&args.times) {
        outputs.input(p);
    }
    outputs.claim(&args.out, TRACK_KIND, "--out")?;
    let opts = OpenOptions {
        channel: args.channel,
        every: args.every.map(Seconds),
        fps: args.fps,
        times: args.times.clone(),
        decoder: args.decoder,
        crop: args.roi,
    };
    let mut source = open(&args.input, &opts)?;
    let info = source.info().clone();
    if let Some(roi) = &args.roi {
        check_roi(roi, &info)?;
    }
    eprintln!("reading {}", info.description);
    let screen = match &args.calib {
        None => ScreenMap::none(),
        Some(p) => ScreenMap::for_frames(Calibration::load(p)?, info.width, info.height)
            .with_context(|| format!("{} cannot be used for {}", p.display(), info.description))?,
    };
    let bar = progress_bar(info.expected_frames);
    let summary = track_to_file(
        source.as_mut(),
        spot_config_for(&info, args.roi),
        &screen,
        &args.out,
        |s| bar.set_position(s.frames),
    )?;
    bar.finish_and_clear();
    for note in &summary.unreadable_notes {
        eprintln!("unreadable: {note}");
    }
    eprintln!("{summary}; wrote {}", args.out.display());
    if let Some(stop) = summary.stopped {
        return Err(stop.into());
    }
    Ok(())
}
