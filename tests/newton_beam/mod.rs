//! A torsion beam under the large spheres' pull, computed here from Newton's law apart from the
//! library: the beam cut into point masses (two small spheres and a rod), each pulled by both large
//! spheres with `G M m / r^2`, the torques summed about the fibre, and the motion integrated with a
//! fourth-order Runge-Kutta step through mass moves. G is CODATA 2018 (6.674 30e-11 m^3 kg^-1 s^-2).
//! The apparatus: 15 g small spheres on a 50 mm arm, a 10 g rod 100 mm long, 1.5 kg large spheres
//! 46.5 mm from the small ones.

use spotlever::analysis::{Event, Sample};
use spotlever::physics::G_CODATA_2018;

pub const SMALL_MASS: f64 = 0.015;
pub const SMALL_RADIUS: f64 = 0.0075;
pub const ARM: f64 = 0.05;
pub const ROD_MASS: f64 = 0.010;
pub const ROD_LENGTH: f64 = 0.1;
pub const LARGE_MASS: f64 = 1.5;
pub const SEPARATION: f64 = 0.0465;

/// The beam as point masses `(x along the beam, height, mass)`: two small spheres (a sphere pulls and
/// is pulled as a point) and the rod cut into `n` equal pieces at their midpoints.
pub fn beam_points(rod_height: f64, n: usize) -> Vec<(f64, f64, f64)> {
    let mut v = vec![(ARM, 0.0, SMALL_MASS), (-ARM, 0.0, SMALL_MASS)];
    for i in 0..n {
        let x = -ROD_LENGTH / 2.0 + ROD_LENGTH * (i as f64 + 0.5) / n as f64;
        v.push((x, rod_height, ROD_MASS / n as f64));
    }
    v
}

/// Torque about the fibre (z) on the beam turned by `psi` in the laboratory, from large spheres at
/// `sources` (x, y in the spheres' plane): the z component of `r x F` summed over the points.
pub fn torque(points: &[(f64, f64, f64)], sources: &[[f64; 2]], psi: f64) -> f64 {
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
pub fn sources(psi_a: f64, b: bool) -> [[f64; 2]; 2] {
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

/// A run of the beam under the full pull, integrated here: `I psi'' = -kappa psi - 2 I gamma psi' +
/// tau(psi)`, the masses moved every `seg` s (A, B, A, ...), starting at rest at A's equilibrium;
/// 1 s steps, a sample every `every_s` of them.
pub fn integrated_run(
    segments: usize,
    seg: f64,
    period_guess: f64,
    every_s: usize,
) -> (Vec<Sample>, Vec<Event>) {
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
    let (dt, every) = (1.0, every_s.max(1));
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
