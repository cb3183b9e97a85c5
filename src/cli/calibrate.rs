//! `spotlever calibrate`: fit the pixel-to-millimetre homography of the screen from point pairs or from a
//! printed grid in one image, print how well it fits, and write the calibration file (and an overlay).

use anyhow::Context;
use clap::Args;
use spotlever::calib::file::CALIBRATION_KIND;
use spotlever::calib::homography::RobustOptions;
use spotlever::calib::report::FitSummary;
use spotlever::calib::{fit_calibration, grid, overlay, pairs};
use spotlever::outfile::{Kind, Outputs};
use spotlever::units::PixelPoint;
use std::path::{Path, PathBuf};

#[derive(Debug, Args)]
#[command(group(clap::ArgGroup::new("mode").required(true).args(["points", "grid"])))]
pub struct CalibrateArgs {
    /// Image of the screen, taken by the camera in its measuring position.
    pub image: PathBuf,
    /// CSV of point pairs `x_px,y_px,x_mm,y_mm` (at least 4).
    #[arg(long, value_name = "PAIRS.CSV")]
    pub points: Option<PathBuf>,
    /// Find a printed square grid of dark lines with this pitch, mm.
    #[arg(long, value_name = "PITCH_MM")]
    pub grid: Option<f64>,
    /// Pixel position nearest the grid intersection that becomes the origin (default: the image centre).
    #[arg(long, value_name = "X_PX,Y_PX", requires = "grid")]
    pub origin: Option<String>,
    /// Calibration file to write (TOML).
    #[arg(long, value_name = "FILE.toml")]
    pub out: PathBuf,
    /// Also write a PNG showing the points used, the fitted grid and the axes.
    #[arg(long, value_name = "OVERLAY.png")]
    pub overlay: Option<PathBuf>,
    /// Pairs farther than this from the fit of the others are left out, px.
    #[arg(long, value_name = "PX", default_value_t = 3.0)]
    pub reject_px: f64,
    /// Free text stored in the calibration file.
    #[arg(long, default_value = "")]
    pub notes: String,
}

/// Default cap on the size of a screen image, megapixels (several times a large camera's; common
/// practice, no source); `SPOTLEVER_MAX_IMAGE_MPX` raises it.
const DEFAULT_MAX_IMAGE_MPX: u64 = 64;

/// Decode a screen image after checking the size its header gives against the cap, so an image that
/// claims a huge size is refused before memory is taken for it.
pub fn open_image(path: &Path) -> anyhow::Result<image::DynamicImage> {
    let reader = || -> anyhow::Result<_> {
        image::ImageReader::open(path)
            .with_context(|| format!("cannot open image {}", path.display()))?
            .with_guessed_format()
            .with_context(|| format!("cannot read image {}", path.display()))
    };
    let (w, h) = reader()?
        .into_dimensions()
        .with_context(|| format!("cannot read image {}", path.display()))?;
    let max_mpx = std::env::var("SPOTLEVER_MAX_IMAGE_MPX")
        .ok()
        .and_then(|v| v.trim().parse::<u64>().ok())
        .filter(|&v| v > 0)
        .unwrap_or(DEFAULT_MAX_IMAGE_MPX);
    let pixels = u64::from(w) * u64::from(h);
    anyhow::ensure!(
        pixels <= max_mpx * 1_000_000,
        "{}: the image is {w}x{h} px ({} Mpx), above the limit of {max_mpx} Mpx for a screen image; \
         use a smaller picture, or raise the limit with SPOTLEVER_MAX_IMAGE_MPX=<Mpx>",
        path.display(),
        pixels / 1_000_000
    );
    let mut r = reader()?;
    let mut limits = image::Limits::default();
    // Room for the decoded picture at up to 16 bytes a pixel (RGBA of 32-bit floats).
    limits.max_alloc = Some(pixels.saturating_mul(16).max(1 << 29));
    r.limits(limits);
    r.decode()
        .with_context(|| format!("cannot read image {}", path.display()))
}

fn parse_origin(s: &str) -> anyhow::Result<PixelPoint> {
    let (a, b) = s
        .split_once(',')
        .with_context(|| format!("--origin {s:?}: write it as X_PX,Y_PX, e.g. 640,360"))?;
    let x: f64 = a
        .trim()
        .parse()
        .with_context(|| format!("--origin: {a:?} is not a number"))?;
    let y: f64 = b
        .trim()
        .parse()
        .with_context(|| format!("--origin: {b:?} is not a number"))?;
    anyhow::ensure!(
        x.is_finite() && y.is_finite(),
        "--origin {s:?} is not a finite point"
    );
    Ok(PixelPoint { x, y })
}

pub fn run(args: CalibrateArgs, mut outputs: Outputs) -> anyhow::Result<()> {
    outputs.input(&args.image);
    if let Some(p) = &args.points {
        outputs.input(p);
    }
    outputs.claim(&args.out, CALIBRATION_KIND, "--out")?;
    if let Some(o) = &args.overlay {
        outputs.claim(o, Kind::Png, "--overlay")?;
    }
    anyhow::ensure!(
        args.reject_px.is_finite() && args.reject_px > 0.0,
        "--reject-px must be a positive number of pixels"
    );
    let img = open_image(&args.image)?;
    let (width, height) = (img.width(), img.height());
    let name = args
        .image
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let (pairs, pitch) = if let Some(p) = &args.points {
        (pairs::read_pairs(p)?, 0.0)
    } else {
        let pitch = args.grid.unwrap_or(0.0);
        anyhow::ensure!(
            pitch.is_finite() && pitch > 0.0,
            "--grid {pitch}: the pitch must be a positive length in mm"
        );
        let origin = args.origin.as_deref().map(parse_origin).transpose()?;
        let found = grid::detect(&img.to_luma32f(), &name, pitch, origin)?;
        println!(
            "grid: {} intersections on {} x {} lines, pitch {:.2} px",
            found.pairs.len(),
            found.lines.0,
            found.lines.1,
            found.spacing_px
        );
        (found.pairs, pitch)
    };
    let opts = RobustOptions {
        threshold_px: args.reject_px,
        ..RobustOptions::default()
    };
    let fitted = fit_calibration(&pairs, &opts, width, height, &name, &args.notes)?;
    let (fit, calib) = (&fitted.fit, &fitted.calibration);
    print!("{}", FitSummary::new(fit, &pairs, calib));
    calib.save(&args.out)?;
    println!("wrote {}", args.out.display());
    if let Some(o) = &args.overlay {
        overlay::write(o, &img.to_rgb8(), calib, &pairs, &fit.used, pitch)?;
        println!("wrote {}", o.display());
    }
    Ok(())
}
