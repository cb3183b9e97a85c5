//! `spotlever calibrate`: fit the pixel-to-millimetre homography of the screen from point pairs or from a
//! printed grid in one image, print how well it fits, and write the calibration file (and an overlay).

use anyhow::Context;
use clap::Args;
use spotlever::calib::homography::RobustOptions;
use spotlever::calib::report::FitSummary;
use spotlever::calib::{fit_calibration, grid, overlay, pairs};
use spotlever::outfile::{Kind, Outputs};
use spotlever::units::PixelPoint;
use std::path::PathBuf;

#[derive(Debug, Args)]
pub struct CalibrateArgs {
    /// Image of the screen, taken by the camera in its measuring position.
    pub image: PathBuf,
    /// CSV of point pairs `x_px,y_px,x_mm,y_mm` (at least 4).
    #[arg(
        long,
        value_name = "PAIRS.CSV",
        required_unless_present = "grid",
        conflicts_with = "grid"
    )]
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
    outputs.claim(&args.out, Kind::Toml, "--out")?;
    if let Some(o) = &args.overlay {
        outputs.claim(o, Kind::Png, "--overlay")?;
    }
    anyhow::ensure!(
        args.reject_px.is_finite() && args.reject_px > 0.0,
        "--reject-px must be a positive number of pixels"
    );
    let img = image::open(&args.image)
        .with_context(|| format!("cannot read image {}", args.image.display()))?;
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
