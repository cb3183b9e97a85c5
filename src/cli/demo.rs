//! `spotlever demo`: the whole chain on the bundled, invented demo run — calibrate the screen image, track
//! the spot through the frames, analyze the track with the demo apparatus — and compare the G found with
//! the CODATA 2018 value the frames were simulated with.

use anyhow::Context;
use clap::Args;
use spotlever::analysis::{self, read_events, AnalysisOptions, Summary};
use spotlever::calib::file::CALIBRATION_KIND;
use spotlever::calib::homography::RobustOptions;
use spotlever::calib::{fit_calibration, grid, Calibration};
use spotlever::export::{write_results, RESULT_FILES};
use spotlever::outfile::{Kind, Outputs};
use spotlever::physics::{G_CODATA_2018, G_CODATA_2018_U};
use spotlever::setup::Setup;
use spotlever::source::{open, OpenOptions};
use spotlever::track::{
    read_track, spot_config_for, track_to_file, RunSummary, ScreenMap, TRACK_KIND,
};
use std::path::{Path, PathBuf};

/// Grid pitch of the demo screen, mm.
const DEMO_PITCH_MM: f64 = 10.0;

#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Folder with the demo run (setup.toml, events.csv, screen.png, frames/).
    #[arg(long, value_name = "DIR", default_value_os_t = default_data())]
    pub data: PathBuf,
    /// Calibration file to use (default: the bundled calib/demo-screen.toml when present, otherwise
    /// screen.png is calibrated afresh from its 10 mm grid).
    #[arg(long, value_name = "FILE")]
    pub calib: Option<PathBuf>,
    /// Folder for the outputs (calibration, track, analysis).
    #[arg(long, value_name = "DIR", default_value = "spotlever-demo-out")]
    pub out: PathBuf,
}

fn default_data() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-frames")
}

pub fn run(args: DemoArgs, mut outputs: Outputs) -> anyhow::Result<()> {
    let data = &args.data;
    anyhow::ensure!(
        data.join("setup.toml").is_file(),
        "{} does not hold the demo run (no setup.toml); regenerate it with `cargo run --release --example make_demo_data` or point --data at it",
        data.display()
    );
    for name in ["setup.toml", "events.csv", "screen.png", "frames"] {
        outputs.input(&data.join(name));
    }
    if let Some(p) = &args.calib {
        outputs.input(p);
    }
    outputs.claim(&args.out, Kind::Folder, "--out")?;
    outputs.claim(
        &args.out.join("calibration.toml"),
        CALIBRATION_KIND,
        "--out",
    )?;
    outputs.claim(&args.out.join("track.csv"), TRACK_KIND, "--out")?;
    outputs.claim_in(&args.out.join("analysis"), RESULT_FILES, "--out")?;
    std::fs::create_dir_all(&args.out)
        .with_context(|| format!("cannot create the output folder {}", args.out.display()))?;
    println!("demo data: {}", data.display());
    println!("outputs:   {}", args.out.display());

    // 1. Calibration.
    let calib_path = args.out.join("calibration.toml");
    let calib = demo_calibration(args.calib.clone(), data)?;
    calib.save(&calib_path)?;

    // 2. Track.
    let track_path = args.out.join("track.csv");
    let summary = demo_track(data, calib, &track_path)?;
    println!("tracking: {summary}");

    // 3. Analyze.
    let results = args.out.join("analysis");
    analyze_demo(data, &track_path, &results)?;
    println!(
        "wrote {}, {} and angle.csv, segments.csv, result.json, report.svg in {}",
        calib_path.display(),
        track_path.display(),
        results.display()
    );
    Ok(())
}

/// Analyze the demo track with the demo apparatus and events, write the results into `results`,
/// print the summary and compare G with the CODATA 2018 value the frames were simulated with.
fn analyze_demo(data: &Path, track_path: &Path, results: &Path) -> anyhow::Result<()> {
    let setup = Setup::load(&data.join("setup.toml"))?;
    let events = read_events(&data.join("events.csv"))?;
    let track = read_track(track_path)?;
    let (samples, missing) =
        analysis::samples_from_track(&track, &spotlever::lever::Lever::from_setup(&setup))?;
    let a = analysis::analyze(&samples, &setup, Some(&events), &AnalysisOptions::default())?;
    write_results(results, &samples, &a)?;
    print!("{}", Summary::new(&a, missing, track.truncated_tail));
    let diff = a.g.value - G_CODATA_2018;
    let u_diff = (a.g.u * a.g.u + G_CODATA_2018_U * G_CODATA_2018_U).sqrt();
    println!(
        "simulated with CODATA 2018 G = 6.67430(15) e-11: difference {:+.2} % = {:+.2} standard uncertainties ({})",
        100.0 * diff / G_CODATA_2018,
        diff / u_diff,
        if diff.abs() <= 2.0 * u_diff {
            "within twice the stated uncertainty"
        } else {
            "OUTSIDE twice the stated uncertainty"
        }
    );
    Ok(())
}

/// The calibration given, else the bundled one, else one fitted afresh to the demo screen image.
fn demo_calibration(given: Option<PathBuf>, data: &Path) -> anyhow::Result<Calibration> {
    let bundled = Path::new(env!("CARGO_MANIFEST_DIR")).join("calib/demo-screen.toml");
    let given = given.or_else(|| bundled.is_file().then_some(bundled));
    if let Some(p) = &given {
        println!("calibration: {}", p.display());
        return Ok(Calibration::load(p)?);
    }
    let screen = data.join("screen.png");
    let img = super::calibrate::open_image(&screen)?;
    let found = grid::detect(&img.to_luma32f(), "screen.png", DEMO_PITCH_MM, None)
        .context("calibrating the demo screen image; pass a calibration with --calib FILE")?;
    let c = fit_calibration(
        &found.pairs,
        &RobustOptions::default(),
        img.width(),
        img.height(),
        "screen.png",
        "spotlever demo: grid of 10 mm pitch",
    )?
    .calibration;
    println!(
        "calibration: {} grid intersections, rms {:.3} px ({:.3} mm), {:.2} px/mm at the centre",
        found.pairs.len(),
        c.rms_px,
        c.rms_mm,
        c.px_per_mm_at_centre()
    );
    Ok(c)
}

/// Track the demo frames with `calib` into `track_path`, as `spotlever track --calib` does.
fn demo_track(data: &Path, calib: Calibration, track_path: &Path) -> anyhow::Result<RunSummary> {
    let mut source = open(&data.join("frames"), &OpenOptions::default())?;
    let info = source.info().clone();
    let screen = ScreenMap::for_frames(calib, info.width, info.height)
        .with_context(|| format!("the calibration does not fit {}", info.description))?;
    Ok(track_to_file(
        source.as_mut(),
        spot_config_for(&info, None),
        &screen,
        track_path,
        |_| {},
    )?)
}
