//! The large spheres' pull on the whole beam (small spheres, far spheres and the rod) and its change as
//! the beam turns, checked against a direct integration of Newton's law written here, apart from the
//! library: the beam cut into point masses, each pulled by both large spheres with `G M m / r^2`, the
//! torques summed about the fibre, and the beam's motion integrated with a fourth-order Runge-Kutta step
//! through mass moves. G is CODATA 2018 (6.674 30e-11 m^3 kg^-1 s^-2).

use spotlever::analysis::{analyze, AnalysisOptions, Event, Sample};
use spotlever::physics::G_CODATA_2018;
use spotlever::setup::Setup;
use std::path::Path;

/// A heavy rod: 10 g over 100 mm at the spheres' height, beside 15 g small spheres on a 50 mm arm.
const SETUP: &str = r#"
[beam]
small_mass = "15 ± 0.01 g"
small_radius = "7.5 ± 0.01 mm"
arm = "50 ± 0.05 mm"
rod_mass = "10 ± 0.01 g"
rod_length = "100 ± 0.05 mm"
rod_height = "ROD_HEIGHT"
[sources]
large_mass = "1.5 ± 0.001 kg"
separation = "46.5 ± 0.05 mm"
[lever]
screen_distance = "2.5 ± 0.001 m"
zero = "0 ± 0.5 mm"
scale = "flat"
"#;

const SMALL_MASS: f64 = 0.015;
const SMALL_RADIUS: f64 = 0.0075;
const ARM: f64 = 0.05;
const ROD_MASS: f64 = 0.010;
const ROD_LENGTH: f64 = 0.1;
const LARGE_MASS: f64 = 1.5;
const SEPARATION: f64 = 0.0465;

fn setup(rod_height_mm: f64) -> Setup {
    let text = SETUP.replace("ROD_HEIGHT", &format!("{rod_height_mm} mm"));
    Setup::parse(&text, Path::new("heavy-rod.toml")).unwrap()
}

/// The beam as point masses `(x along the beam, height, mass)`: two small spheres (a sphere pulls and
/// is pulled as a point) and the rod cut into `n` equal pieces at their midpoints.
fn beam_points(rod_height: f64, n: usize) -> Vec<(f64, f64, f64)> {
    let mut v = vec![(ARM, 0.0, SMALL_MASS), (-ARM, 0.0, SMALL_MASS)];
    for i in 0..n {
        let x = -ROD_LENGTH / 2.0 + ROD_LENGTH * (i as f64 + 0.5) / n as f64;
        v.push((x, rod_height, ROD_MASS / n as f64));
    }
    v
}

/// Torque about the fibre (z) on the beam turned by `psi` in the laboratory, from large spheres at
/// `sources` (x, y in the spheres' plane): the z component of `r x F` summed over the points.
fn torque(points: &[(f64, f64, f64)], sources: &[[f64; 2]], psi: f64) -> f64 {
    let (c, s) = (psi.cos(), psi.sin());
    let mut tau = 0.0;
    for &(x, z, m) in points {
        let p = [x * c, x * s, z];
        for q in sources {
            let d = [q[0] - p[0], q[1] - p[1], -p[2]];
            let r = (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt();
            let f = G_CODATA_2018 * LARGE_MASS * m / (r * r * r);
            tau += p[0] * f * d[1] - p[1] * f * d[0];
        }
    }
    tau
}

/// The large spheres' laboratory positions for mass position A, placed so that with the beam at rest
/// at `psi_a` each sits `SEPARATION` from its small sphere, square to the arm; B is A mirrored in the
/// beam's untwisted line.
fn sources(psi_a: f64, b: bool) -> [[f64; 2]; 2] {
    let (c, s) = (psi_a.cos(), psi_a.sin());
    let at = |x: f64, y: f64| {
        let p = [x * c - y * s, x * s + y * c];
        if b {
            [p[0], -p[1]]
        } else {
            p
        }
    };
    [at(ARM, SEPARATION), at(-ARM, -SEPARATION)]
}

#[test]
fn pull_and_stiffness_match_a_direct_sum() {
    for h_mm in [0.0, 6.0] {
        let s = setup(h_mm);
        let pull = s.pull();
        let points = beam_points(h_mm * 1e-3, 20_000);
        // In the beam's rest frame (psi_a = 0) the library's angle and the laboratory's coincide.
        let src = sources(0.0, false);
        let direct = torque(&points, &src, 0.0) / G_CODATA_2018;
        let ours = pull.torque_per_g(0.0);
        assert!(
            (ours / direct - 1.0).abs() < 1e-7,
            "h {h_mm} mm: {ours} vs {direct}"
        );
        let step = 1e-4;
        let stiff = (torque(&points, &src, step) - torque(&points, &src, -step))
            / (2.0 * step)
            / G_CODATA_2018;
        assert!(
            (pull.stiffness_per_g() / stiff - 1.0).abs() < 1e-6,
            "h {h_mm} mm: stiffness {} vs {stiff}",
            pull.stiffness_per_g()
        );
        // The rod's share: about an eighth of the torque at the spheres' height, less above them.
        let rod = pull.rod_torque_per_g(0.0) / pull.spheres_torque_per_g(0.0);
        eprintln!("h {h_mm} mm: rod adds {:.2} % to the torque", 100.0 * rod);
        assert!(rod > 0.05 && rod < 0.2, "{rod}");
    }
}

/// A run of the beam under the full pull, integrated here: `I psi'' = -kappa psi - 2 I gamma psi' +
/// tau(psi)`, the masses moved every `seg` s (A, B, A, ...), starting at rest at A's equilibrium.
fn integrated_run(segments: usize, seg: f64, period_guess: f64) -> (Vec<Sample>, Vec<Event>) {
    let inertia = ROD_MASS * ROD_LENGTH * ROD_LENGTH / 12.0
        + 2.0 * SMALL_MASS * (ARM * ARM + 0.4 * SMALL_RADIUS * SMALL_RADIUS);
    let kappa = inertia * (2.0 * std::f64::consts::PI / period_guess).powi(2);
    let gamma = 1.0 / 2000.0;
    let points = beam_points(0.0, 400);
    // The equilibrium at A: the fibre holds the pull of spheres placed `SEPARATION` from the beam at
    // rest there, so psi_a = tau / kappa with the torque of that placement (independent of psi_a).
    let tau_rest = torque(&points, &sources(0.0, false), 0.0);
    let psi_a = tau_rest / kappa;
    let src = [sources(psi_a, false), sources(psi_a, true)];
    let accel = |psi: f64, w: f64, which: usize| {
        (-kappa * psi - 2.0 * inertia * gamma * w + torque(&points, &src[which], psi)) / inertia
    };
    let (dt, every) = (1.0, 10);
    let (mut psi, mut w) = (psi_a, 0.0);
    let mut samples = Vec::new();
    let steps = (segments as f64 * seg / dt).round() as usize;
    for i in 0..=steps {
        let t = i as f64 * dt;
        let which = ((t / seg).floor() as usize).min(segments - 1) % 2;
        if i % every == 0 {
            samples.push(Sample { t, theta: psi });
        }
        let k1 = (w, accel(psi, w, which));
        let k2 = (
            w + 0.5 * dt * k1.1,
            accel(psi + 0.5 * dt * k1.0, w + 0.5 * dt * k1.1, which),
        );
        let k3 = (
            w + 0.5 * dt * k2.1,
            accel(psi + 0.5 * dt * k2.0, w + 0.5 * dt * k2.1, which),
        );
        let k4 = (w + dt * k3.1, accel(psi + dt * k3.0, w + dt * k3.1, which));
        psi += dt / 6.0 * (k1.0 + 2.0 * k2.0 + 2.0 * k3.0 + k4.0);
        w += dt / 6.0 * (k1.1 + 2.0 * k2.1 + 2.0 * k3.1 + k4.1);
    }
    let events = (0..segments)
        .map(|k| Event::new(k as f64 * seg, if k % 2 == 0 { "A" } else { "B" }))
        .collect();
    (samples, events)
}

#[test]
fn g_from_a_heavy_rod_run_integrated_from_newtons_law() {
    // Five segments of four periods at a 500 s period, no noise: what is left is the method's error.
    let (samples, events) = integrated_run(5, 2000.0, 500.0);
    let a = analyze(
        &samples,
        &setup(0.0),
        Some(&events),
        &AnalysisOptions::default(),
    )
    .unwrap();
    let dev = a.g.value / G_CODATA_2018 - 1.0;
    eprintln!(
        "G = {:.6e} ({:+.3} % from CODATA 2018, u {:.3} %); acceleration method {:?}",
        a.g.value,
        100.0 * dev,
        100.0 * a.g.u / a.g.value,
        a.acceleration.as_ref().map(|x| x.g.value)
    );
    // Without the rod's pull G came out about 13 % high; with it, within 0.5 % of the truth.
    assert!(dev.abs() < 0.005, "G off by {:.3} %", 100.0 * dev);
    if let Some(acc) = &a.acceleration {
        let dev = acc.g.value / G_CODATA_2018 - 1.0;
        assert!(
            dev.abs() < 0.005_f64.max(3.0 * acc.g.u / acc.g.value),
            "acceleration G off by {:.3} %",
            100.0 * dev
        );
    }
}
