//! Regenerates the bundled demo run in `sample-frames/`: an invented small torsion balance, simulated with
//! the CODATA 2018 value of G, filmed by an invented camera that sees the ruled screen in perspective.
//!
//! `cargo run --release --example make_demo_data [-- OUT_DIR]` writes (deterministically, fixed seed):
//! `setup.toml` (the apparatus), `events.csv` (true mass-move times), `frames/frame_NNNNN.jpg` (grayscale
//! time-lapse), `times.csv` (`file,t_s`), `truth.csv` (`t_s,theta_rad,x_mm,x_px,y_px`) and `screen.png`
//! (the lit, ruled screen without the spot, for calibration).
//!
//! The chain is: twist angle theta(t) (damped torsion pendulum driven by the gravitational torque, the
//! large spheres swung between two positions, plus a slow linear creep of the rest angle) -> scale reading
//! on a flat screen (the optical lever) -> screen millimetres -> image pixels (a fixed homography with a
//! perspective tilt) -> rendered frame with sensor noise and JPEG compression.

use nalgebra::{Matrix3, SMatrix, SVector, Vector3};
use rand::rngs::StdRng;
use rand::SeedableRng;
use rand_distr::{Distribution, Normal};
use spotlever::lever::Lever;
use spotlever::physics;
use spotlever::setup::{ScaleShape, Setup};
use spotlever::units::Radians;
use std::f64::consts::PI;
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
const WIDTH: u32 = 320;
const HEIGHT: u32 = 240;
const GRID_PITCH_MM: f64 = 10.0;
const LINE_WIDTH_MM: f64 = 0.8;
/// The x = 0 and y = 0 lines are drawn thicker so the grid's origin can be found.
const AXIS_LINE_WIDTH_MM: f64 = 2.0;
const PAPER_DN: f64 = 120.0;
const INK_DN: f64 = 45.0;
/// The laser multiplies the local brightness by up to 1 + this (dim room light, bright spot).
const SPOT_GAIN: f64 = 1.0;
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

    let b = &setup.beam;
    let s = &setup.sources;
    let inertia = physics::beam_inertia(
        b.rod_mass.value,
        b.rod_length.value,
        b.small_mass.value,
        b.small_radius.value,
        b.arm.value,
        b.extra_inertia.value,
    );
    let omega0 = 2.0 * PI / PERIOD_S;
    let kappa = physics::torsion_constant(inertia, omega0);
    let torque = physics::gravitational_torque(
        physics::G_CODATA_2018,
        b.small_mass.value,
        s.large_mass.value,
        b.arm.value,
        s.separation.value,
    );
    let theta_g = torque / kappa;
    let gamma = 1.0 / DAMPING_TIME_S;
    let omega_d = (omega0 * omega0 - gamma * gamma).sqrt();
    let motion = Motion::new(theta_g, omega_d, gamma);
    let lever = Lever {
        distance_m: setup.lever.screen_distance.value,
        zero_m: setup.lever.zero.value,
        shape: ScaleShape::Flat,
    };
    let camera = Camera::new()?;
    println!(
        "inertia {inertia:.4e} kg m^2, kappa {kappa:.4e} N m/rad, torque {torque:.4e} N m, theta_G {theta_g:.4e} rad"
    );

    let mut events = std::fs::File::create(out.join("events.csv"))?;
    writeln!(events, "t_s,label")?;
    for (i, t) in MOVES_S.iter().enumerate() {
        let label = if i % 2 == 0 { "to_b" } else { "to_a" };
        writeln!(events, "{t},{label}")?;
    }

    let screen = render_screen(&camera);
    let mut rng = StdRng::seed_from_u64(SEED);
    let noise = Normal::new(0.0, NOISE_DN)?;
    to_gray(&screen, None, &mut rng, &noise).save(out.join("screen.png"))?;

    let mut times = std::fs::File::create(out.join("times.csv"))?;
    writeln!(times, "file,t_s")?;
    let mut truth = std::fs::File::create(out.join("truth.csv"))?;
    writeln!(truth, "t_s,theta_rad,x_mm,x_px,y_px")?;
    let n = (RUN_END_S / FRAME_INTERVAL_S).round() as usize;
    for i in 0..n {
        let t = i as f64 * FRAME_INTERVAL_S;
        let theta = motion.theta(t) + DRIFT_RAD_PER_S * t;
        let x_mm = lever.reading(Radians(theta)) * 1e3;
        let (px, py) = camera.to_image(x_mm, SPOT_Y_MM);
        let name = format!("frame_{i:05}.jpg");
        let img = to_gray(&screen, Some((px, py)), &mut rng, &noise);
        let file = std::fs::File::create(out.join("frames").join(&name))?;
        let mut enc = image::codecs::jpeg::JpegEncoder::new_with_quality(
            std::io::BufWriter::new(file),
            JPEG_QUALITY,
        );
        enc.encode_image(&img)?;
        writeln!(times, "frames/{name},{t}")?;
        writeln!(truth, "{t},{theta:.9e},{x_mm:.6},{px:.4},{py:.4}")?;
    }
    println!("wrote {n} frames to {}", out.display());
    Ok(())
}

/// The balance's twist: a damped oscillator whose rest angle jumps between -theta_G and +theta_G at each
/// mass move, solved exactly segment by segment.
struct Motion {
    /// (start time, rest angle, theta at start, angular velocity at start)
    segments: Vec<(f64, f64, f64, f64)>,
    omega_d: f64,
    gamma: f64,
}

impl Motion {
    fn new(theta_g: f64, omega_d: f64, gamma: f64) -> Self {
        let mut m = Motion {
            segments: Vec::new(),
            omega_d,
            gamma,
        };
        let mut rest = -theta_g;
        m.segments.push((0.0, rest, rest + START_SWING_RAD, 0.0));
        for &t in &MOVES_S {
            let (th, om) = m.state(t);
            rest = -rest;
            m.segments.push((t, rest, th, om));
        }
        m
    }
    /// Angle and angular velocity at `t`.
    fn state(&self, t: f64) -> (f64, f64) {
        let &(t0, rest, th0, om0) = self
            .segments
            .iter()
            .rev()
            .find(|s| s.0 <= t)
            .unwrap_or(&self.segments[0]);
        let a = th0 - rest;
        let b = (om0 + self.gamma * a) / self.omega_d;
        let dt = t - t0;
        let e = (-self.gamma * dt).exp();
        let (sn, cs) = (self.omega_d * dt).sin_cos();
        let th = rest + e * (a * cs + b * sn);
        let om = e
            * ((-self.gamma * a + self.omega_d * b) * cs
                + (-self.gamma * b - self.omega_d * a) * sn);
        (th, om)
    }
    fn theta(&self, t: f64) -> f64 {
        self.state(t).0
    }
}

/// The invented camera: a homography from screen millimetres (x along the scale, y up) to image pixels,
/// fixed by where four screen corners land (a view from slightly left of and below the screen's normal).
struct Camera {
    h: Matrix3<f64>,
    h_inv: Matrix3<f64>,
}

impl Camera {
    fn new() -> Result<Self, String> {
        let pairs = [
            ((-60.0, 45.0), (14.0, 16.0)),
            ((60.0, 45.0), (304.0, 6.0)),
            ((60.0, -45.0), (298.0, 233.0)),
            ((-60.0, -45.0), (20.0, 222.0)),
        ];
        let mut a = SMatrix::<f64, 8, 8>::zeros();
        let mut rhs = SVector::<f64, 8>::zeros();
        for (k, ((x, y), (u, v))) in pairs.iter().enumerate() {
            let r = 2 * k;
            a.row_mut(r)
                .copy_from_slice(&[*x, *y, 1.0, 0.0, 0.0, 0.0, -u * x, -u * y]);
            a.row_mut(r + 1)
                .copy_from_slice(&[0.0, 0.0, 0.0, *x, *y, 1.0, -v * x, -v * y]);
            rhs[r] = *u;
            rhs[r + 1] = *v;
        }
        let p = a
            .lu()
            .solve(&rhs)
            .ok_or("camera corners are not in general position")?;
        let h = Matrix3::new(p[0], p[1], p[2], p[3], p[4], p[5], p[6], p[7], 1.0);
        let h_inv = h.try_inverse().ok_or("camera homography is singular")?;
        Ok(Camera { h, h_inv })
    }
    fn to_image(&self, x_mm: f64, y_mm: f64) -> (f64, f64) {
        let v = self.h * Vector3::new(x_mm, y_mm, 1.0);
        (v.x / v.z, v.y / v.z)
    }
    fn to_screen(&self, u: f64, v: f64) -> (f64, f64) {
        let w = self.h_inv * Vector3::new(u, v, 1.0);
        (w.x / w.z, w.y / w.z)
    }
}

/// Noise-free screen brightness per pixel (4 x 4 supersampled ruled grid, mild vignetting).
fn render_screen(camera: &Camera) -> Vec<f64> {
    let mut out = vec![0.0; (WIDTH * HEIGHT) as usize];
    const SS: usize = 4;
    for j in 0..HEIGHT as usize {
        for i in 0..WIDTH as usize {
            let mut ink = 0.0;
            for sj in 0..SS {
                for si in 0..SS {
                    let u = i as f64 - 0.5 + (si as f64 + 0.5) / SS as f64;
                    let v = j as f64 - 0.5 + (sj as f64 + 0.5) / SS as f64;
                    let (x, y) = camera.to_screen(u, v);
                    if on_line(x) || on_line(y) {
                        ink += 1.0;
                    }
                }
            }
            let ink = ink / (SS * SS) as f64;
            let du = (i as f64 - WIDTH as f64 / 2.0) / WIDTH as f64;
            let dv = (j as f64 - HEIGHT as f64 / 2.0) / HEIGHT as f64;
            let light = 1.0 - 0.35 * (du * du + dv * dv);
            out[j * WIDTH as usize + i] = (PAPER_DN * (1.0 - ink) + INK_DN * ink) * light;
        }
    }
    out
}

/// Whether a screen coordinate (mm) falls on a ruled line.
fn on_line(c: f64) -> bool {
    let width = if c.abs() < AXIS_LINE_WIDTH_MM {
        AXIS_LINE_WIDTH_MM
    } else {
        LINE_WIDTH_MM
    };
    let k = (c / GRID_PITCH_MM).round();
    (c - k * GRID_PITCH_MM).abs() < 0.5 * width
}

/// Add the spot (a Gaussian, clipped at full scale) and sensor noise, quantise to 8 bits.
fn to_gray(
    screen: &[f64],
    spot: Option<(f64, f64)>,
    rng: &mut StdRng,
    noise: &Normal<f64>,
) -> image::GrayImage {
    image::GrayImage::from_fn(WIDTH, HEIGHT, |i, j| {
        let mut v = screen[(j * WIDTH + i) as usize];
        if let Some((px, py)) = spot {
            let r2 = (i as f64 - px).powi(2) + (j as f64 - py).powi(2);
            v *= 1.0 + SPOT_GAIN * (-r2 / (2.0 * SPOT_SIGMA_PX * SPOT_SIGMA_PX)).exp();
        }
        v += noise.sample(rng);
        image::Luma([v.round().clamp(0.0, 255.0) as u8])
    })
}
