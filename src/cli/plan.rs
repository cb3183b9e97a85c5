//! `spotlever plan`: predict what an apparatus design will show, from its setup file's `[fibre]` table.

use anyhow::Context;
use clap::Args;
use spotlever::plan::fibre::Fibre;
use spotlever::plan::predict::{predict, Damping, PlanOptions, TrackerNoise};
use spotlever::plan::report::{plan_json, PlanReport};
use spotlever::setup::Setup;
use std::path::PathBuf;

#[derive(Debug, Args)]
pub struct PlanArgs {
    /// Setup file with a [fibre] table (material, diameter or width and thickness, length).
    pub setup: PathBuf,
    /// Print one JSON object instead of the text report.
    #[arg(long)]
    pub json: bool,
    /// Amplitude damping time (1/e) of the swing, seconds.
    #[arg(long, value_name = "SECONDS", conflicts_with = "quality_factor")]
    pub damping_time: Option<f64>,
    /// Quality factor of the swing (instead of --damping-time).
    #[arg(long, value_name = "Q")]
    pub quality_factor: Option<f64>,
    /// Tracker noise on the screen, mm (one standard deviation).
    #[arg(long, value_name = "MM", conflicts_with = "noise_px")]
    pub noise_mm: Option<f64>,
    /// Tracker noise in the image, px (needs --calibration).
    #[arg(long, value_name = "PX", requires = "calibration")]
    pub noise_px: Option<f64>,
    /// Camera calibration file: also give the spot travel in camera pixels.
    #[arg(long, value_name = "FILE")]
    pub calibration: Option<PathBuf>,
}

pub fn run(args: PlanArgs) -> anyhow::Result<()> {
    let setup = Setup::load(&args.setup)?;
    let fibre = Fibre::from_setup(&setup)?;
    let options = PlanOptions {
        damping: match (args.damping_time, args.quality_factor) {
            (Some(t), _) => Some(Damping::Time(t)),
            (None, Some(q)) => Some(Damping::Quality(q)),
            (None, None) => None,
        },
        noise: match (args.noise_mm, args.noise_px) {
            (Some(n), _) => Some(TrackerNoise::Millimetres(n)),
            (None, Some(p)) => Some(TrackerNoise::Pixels(p)),
            (None, None) => None,
        },
        calibration: args
            .calibration
            .as_deref()
            .map(spotlever::calib::Calibration::load)
            .transpose()?,
    };
    let p = predict(&setup, &fibre, &options)?;
    if args.json {
        let v = plan_json(&fibre, &p).context("encoding the prediction")?;
        println!("{}", serde_json::to_string_pretty(&v)?);
    } else {
        let report = PlanReport {
            setup: &setup,
            fibre: &fibre,
            prediction: &p,
        };
        print!("{report}");
    }
    Ok(())
}
