//! Regenerates the bundled demo run in `sample-frames/`: an invented small torsion balance, simulated with
//! the CODATA 2018 value of G, filmed by an invented camera that sees the ruled screen in perspective.
//!
//! `cargo run --release --example make_demo_data [-- OUT_DIR]` writes (deterministically, fixed seed):
//! `setup.toml` (the apparatus), `events.csv` (true mass-move times), `frames/frame_NNNNN.jpg` (grayscale
//! time-lapse) with `frames/times.csv` (`file,t_s`), `truth.csv` (`t_s,theta_rad,x_mm,x_px,y_px`) and `screen.png`
//! (the lit, ruled screen without the spot, for calibration).
//!
//! The chain is: twist angle theta(t) (damped torsion pendulum driven by the gravitational torque, the
//! large spheres swung between two positions, plus a slow linear creep of the rest angle) -> scale reading
//! on a flat screen (the optical lever) -> screen millimetres -> image pixels (a fixed homography with a
//! perspective tilt) -> rendered frame with sensor noise and JPEG compression.

use spotlever::lever::Lever;
use spotlever::physics;
use spotlever::setup::Setup;
use spotlever::synth::motion::{MassMove, MassPosition, MotionConfig, Trajectory};
use spotlever::synth::{
    render_scene, CameraView, Illumination, LaserSpot, RuledScreen, Scene, Sensor, Speckle,
};
use spotlever::units::{PixelPoint, Radians, ScreenPoint};
use std::io::Write;
use std::path::{Path, PathBuf};

/// The invented apparatus. Nominal values are the simulation's truth; the stated uncertainties are what an
/// experimenter with ordinary workshop tools could claim for them.
const SETUP_TOML: &str = r#"# Invented demo apparatus: a small torsion balance for the torsion-balance measurement of G.
# Nominal values are the truth used to simulate the bundled frames (G = CODATA 2018).
[beam]
small_mass = "15.00 ± 0.02 g"       # each small lead sphere
small_radius = "6.81 ± 0.02 mm"
arm = "50.0 ± 0.1 mm"               # fibre axis to small-sphere centre
rod_mass = "10.0 ± 0.1 g"           # aluminium tube, end to end
rod_length = "100.0 ± 0.5 mm"
extra_inertia = "2.0e-7 ± 0.5e-7 kg m^2"  # mirror and clamp

[sources]
large_mass = "1.500 ± 0.002 kg"     # each large lead sphere
large_radius = "31.6 ± 0.1 mm"
separation = "46.0 ± 0.1 mm"        # centre to centre, beam at rest

[lever]
screen_distance = "2.500 ± 0.003 m" # mirror to screen
zero = "0 ± 0.5 mm"                 # foot point on the scale
scale = "flat"

[fibre]
material = "tungsten"
diameter = "30 ± 1 um"
length = "400 ± 2 mm"
"#;

/// Period of the invented balance: set by the fibre (tungsten, 30 um, 400 mm, shear modulus about
/// 161 GPa gives kappa ~ 3.2e-8 N m/rad) and the beam's inertia; rounded to a round number here and the
/// torsion constant derived from it so the truth is exactly known.
const PERIOD_S: f64 = 320.0;
/// Amplitude damping time (1/e), s (quality factor ~ 15: a lightly damped balance in air).
const DAMPING_TIME_S: f64 = 1500.0;
/// Creep of the rest angle, rad/s.
const DRIFT_RAD_PER_S: f64 = 1.0e-7;
/// Residual swing at the start, rad.
const START_SWING_RAD: f64 = 3.0e-4;
/// Time between frames, s.
const FRAME_INTERVAL_S: f64 = 12.0;
/// Mass moves (true times) and the run's end, s: four segments of about three periods.
const MOVES_S: [f64; 3] = [1000.0, 2000.0, 3000.0];
const RUN_END_S: f64 = 4000.0;
/// Height of the spot on the screen, mm (the beam plane).
const SPOT_Y_MM: f64 = 8.0;

/// Image size and rendering.
const WIDTH: usize = 320;
const HEIGHT: usize = 240;
const GRID_PITCH_MM: f64 = 10.0;
const LINE_WIDTH_MM: f64 = 1.5;
/// Width of the (unused) major lines; every line is drawn alike.
const AXIS_LINE_WIDTH_MM: f64 = 2.0;
const PAPER_DN: f64 = 110.0;
const SPOT_PEAK_DN: f64 = 135.0;
const SPOT_SIGMA_PX: f64 = 2.6;
const NOISE_DN: f64 = 1.0;
const JPEG_QUALITY: u8 = 70;
const SEED: u64 = 20_181_129;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let out: PathBuf = std::env::args()
        .nth(1)
        .map(PathBuf::from)
        .unwrap_or_else(|| Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-frames"));
    std::fs::create_dir_all(out.join("frames"))?;
    std::fs::write(out.join("setup.toml"), SETUP_TOML)?;
    let setup = Setup::parse(SETUP_TOML, &out.join("setup.toml"))?;

    let mut positions = [MassPosition::B, MassPosition::A].iter().cycle();
    let config = MotionConfig {
        initial_position: MassPosition::A,
        moves: MOVES_S
            .iter()
            .map(|&t| MassMove {
                t,
                to: *positions.next().unwrap_or(&MassPosition::A),
            })
            .collect(),
        drift: DRIFT_RAD_PER_S,
        initial_offset: START_SWING_RAD,
        ..MotionConfig::from_setup(&setup, physics::G_CODATA_2018, PERIOD_S, DAMPING_TIME_S)
    };
    let motion = Trajectory::new(&config)?;
    let lever = Lever {
        distance_m: setup.lever.screen_distance.value,
        zero_m: setup.lever.zero.value,
        shape: setup.lever.scale,
    };
    println!(
        "inertia {:.4e} kg m^2, kappa {:.4e} N m/rad, torque {:.4e} N m, theta_G {:.4e} rad",
        config.inertia, config.kappa, config.torque, motion.truth.theta_g
    );

    let mut events = std::fs::File::create(out.join("events.csv"))?;
    // One row per segment start: the run opens with the masses at A, then each move.
    writeln!(events, "t_s,label")?;
    writeln!(events, "0,A")?;
    for m in &config.moves {
        let label = match m.to {
            MassPosition::A => "A",
            MassPosition::B => "B",
            MassPosition::Away => "away",
        };
        writeln!(events, "{},{label}", m.t)?;
    }

    // The camera: about 2.4 px/mm at the centre, seen from below and to the left, slightly rolled.
    let view = CameraView {
        look_at: ScreenPoint {
            x_mm: 0.0,
            y_mm: 0.0,
        },
        image_centre: PixelPoint {
            x: (WIDTH as f64 - 1.0) / 2.0,
            y: (HEIGHT as f64 - 1.0) / 2.0,
        },
        px_per_mm: 2.4,
        focal_px: 1.1 * WIDTH as f64,
        tilt_x_deg: 12.0,
        tilt_y_deg: -15.0,
        roll_deg: 1.5,
    };
    let mut scene = Scene {
        width: WIDTH,
        height: HEIGHT,
        screen_to_image: view.homography()?,
        screen: RuledScreen {
            pitch_mm: GRID_PITCH_MM,
            line_width_mm: LINE_WIDTH_MM,
            major_every: 0,
            major_width_mm: AXIS_LINE_WIDTH_MM,
            origin: ScreenPoint::default(),
            extent_mm: (-150.0, -100.0, 150.0, 100.0),
            ink_reflectance: 0.35,
            surround_reflectance: 0.1,
        },
        illumination: Illumination {
            paper_dn: PAPER_DN,
            ..Illumination::default()
        },
        spot: None,
        sensor: Sensor {
            noise_dn: NOISE_DN,
            blur_sigma_px: 0.5,
            white: 255,
        },
    };
    let (plane, _) = render_scene(&scene, SEED)?;
    to_gray(&plane).save(out.join("screen.png"))?;

    let mut times = std::fs::File::create(out.join("frames").join("times.csv"))?;
    writeln!(times, "file,t_s")?;
    let mut truth = std::fs::File::create(out.join("truth.csv"))?;
    writeln!(truth, "t_s,theta_rad,x_mm,x_px,y_px")?;
    let n = (RUN_END_S / FRAME_INTERVAL_S).round() as usize;
    for i in 0..n {
        let t = i as f64 * FRAME_INTERVAL_S;
        let theta = motion.angle(t);
        let x_mm = lever.reading(Radians(theta)) * 1e3;
        scene.spot = Some(LaserSpot {
            centre: ScreenPoint {
                x_mm,
                y_mm: SPOT_Y_MM,
            },
            peak_dn: SPOT_PEAK_DN,
            sigma_px: SPOT_SIGMA_PX,
            speckle: Some(Speckle {
                contrast: 0.1,
                grain_px: 3.0,
                seed: SEED + 1,
            }),
        });
        let (plane, drawn) = render_scene(&scene, SEED + 2 + i as u64)?;
        let px = drawn
            .spot_px
            .ok_or("the spot fell outside the camera's view")?;
        let name = format!("frame_{i:05}.jpg");
        let file = std::fs::File::create(out.join("frames").join(&name))?;
        let mut enc = image::codecs::jpeg::JpegEncoder::new_with_quality(
            std::io::BufWriter::new(file),
            JPEG_QUALITY,
        );
        enc.encode_image(&to_gray(&plane))?;
        writeln!(times, "{name},{t}")?;
        writeln!(truth, "{t},{theta:.9e},{x_mm:.6},{:.4},{:.4}", px.x, px.y)?;
    }
    println!("wrote {n} frames to {}", out.display());
    Ok(())
}

/// An 8-bit grayscale image of a rendered plane.
fn to_gray(plane: &spotlever::frame::Plane) -> image::GrayImage {
    let bytes = plane.values().map(|v| v.min(255) as u8).collect();
    image::GrayImage::from_raw(plane.width() as u32, plane.height() as u32, bytes)
        .expect("one byte per pixel")
}
