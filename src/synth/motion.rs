//! Torsion-balance motion with known truth: the exact piecewise solution of
//! `I theta'' + b theta' + kappa theta = tau(t)`, where the gravitational torque `tau` switches sign
//! (or to zero) each time the large masses are moved, plus an optional linear drift of the zero and
//! white Gaussian noise on the sampled angle.
//!
//! Within each stretch of constant torque the motion is the textbook under-damped oscillator
//! `theta(t) = theta_eq + e^(-gamma s) (c1 cos(omega_d s) + c2 sin(omega_d s))`, `s = t - t_move`,
//! with `gamma = b / (2 I)`, `omega_d^2 = kappa / I - gamma^2` and `theta_eq = tau / kappa`; `c1, c2`
//! carry the angle and angular velocity across each move, so the trace is exact (no time stepping).
//!
//! ```
//! use spotlever::synth::motion::{MassPosition, MassMove, MotionConfig, Trajectory};
//! let cfg = MotionConfig {
//!     inertia: 1.0e-4,
//!     kappa: 1.0e-8,
//!     damping_time: 2000.0,
//!     torque: 2.0e-11,
//!     initial_position: MassPosition::A,
//!     moves: vec![MassMove { t: 1500.0, to: MassPosition::B }],
//!     ..MotionConfig::default()
//! };
//! let tr = Trajectory::new(&cfg).unwrap();
//! let samples = tr.sample(0.0, 3000.0, 1.0, 0.0, 1).unwrap();
//! assert_eq!(samples.len(), 3001);
//! ```

use crate::physics;
use crate::setup::Setup;
use rand::rngs::StdRng;
use rand::SeedableRng;
use rand_distr::{Distribution, Normal};
use std::f64::consts::PI;
use thiserror::Error;

/// Where the large masses sit. `A` pulls the beam towards positive angles, `B` towards negative ones.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum MassPosition {
    /// Torque `+tau`.
    A,
    /// Torque `-tau`.
    B,
    /// Masses away: no torque.
    Away,
}

impl MassPosition {
    /// Sign of the torque in this position: +1, -1 or 0.
    pub fn sign(self) -> f64 {
        match self {
            MassPosition::A => 1.0,
            MassPosition::B => -1.0,
            MassPosition::Away => 0.0,
        }
    }
}

/// A move of the large masses at time `t` (seconds since the start) to position `to`. The move is
/// taken as instantaneous.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct MassMove {
    pub t: f64,
    pub to: MassPosition,
}

/// The simulated apparatus and run. All SI.
#[derive(Debug, Clone, PartialEq)]
pub struct MotionConfig {
    /// Moment of inertia of the beam, kg m^2.
    pub inertia: f64,
    /// Torsion constant of the fibre, N m / rad.
    pub kappa: f64,
    /// Amplitude 1/e time `1 / gamma`, s (`b = 2 I / damping_time`); `f64::INFINITY` for no damping.
    pub damping_time: f64,
    /// Magnitude of the gravitational torque with the masses at A or B, N m.
    pub torque: f64,
    /// Mass position from `t = 0` until the first move.
    pub initial_position: MassPosition,
    /// Mass moves, in increasing time order.
    pub moves: Vec<MassMove>,
    /// Angle of the untwisted fibre at `t = 0`, rad (the scale's zero offset in angle).
    pub zero_angle: f64,
    /// Linear drift of the fibre's zero, rad/s (added as `drift * t`).
    pub drift: f64,
    /// Angle at `t = 0` relative to the first equilibrium, rad (sets the initial swing).
    pub initial_offset: f64,
    /// Angular velocity at `t = 0`, rad/s.
    pub initial_velocity: f64,
}

impl Default for MotionConfig {
    fn default() -> Self {
        Self {
            inertia: 1.0e-4,
            kappa: 1.0e-8,
            damping_time: f64::INFINITY,
            torque: 0.0,
            initial_position: MassPosition::A,
            moves: Vec::new(),
            zero_angle: 0.0,
            drift: 0.0,
            initial_offset: 0.0,
            initial_velocity: 0.0,
        }
    }
}

impl MotionConfig {
    /// An apparatus from a setup file (central values): inertia from the beam, `kappa` from the
    /// natural period `period_s` (the measured constant, the fibre's less the spheres' stiffness), and
    /// the torque that gives the equilibria of the linearised pull on the whole beam
    /// ([`physics::pull::BeamPull`]): with the fibre's `kappa_f = kappa + G tau'`, the equilibrium
    /// `theta = G tau_0 / kappa_f`, held here by a constant torque `kappa theta`.
    pub fn from_setup(setup: &Setup, g: f64, period_s: f64, damping_time: f64) -> Self {
        let inertia = setup.inertia();
        let kappa = physics::torsion_constant(inertia, 2.0 * PI / period_s);
        let pull = setup.pull();
        let kappa_fibre = kappa + g * pull.stiffness_per_g();
        let torque = kappa * g * pull.torque_per_g(0.0) / kappa_fibre;
        Self {
            inertia,
            kappa,
            damping_time,
            torque,
            ..Self::default()
        }
    }
}

/// What was wrong with a motion configuration.
#[derive(Debug, Error, PartialEq)]
pub enum MotionError {
    #[error("inertia and kappa must be positive and finite (got I = {inertia}, kappa = {kappa})")]
    NotPositive { inertia: f64, kappa: f64 },
    #[error("damping time {0} s is not positive")]
    BadDamping(f64),
    #[error("the oscillator is not under-damped (gamma = {gamma} 1/s >= omega_0 = {omega0} rad/s); use a longer damping time")]
    Overdamped { gamma: f64, omega0: f64 },
    #[error("mass move {index} at t = {t} s is not after the previous one")]
    Unordered { index: usize, t: f64 },
    #[error("sampling: {0}")]
    Sampling(String),
}

/// One stretch of constant torque, with its exact solution.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Piece {
    /// Start of the stretch (0 or the move time), s.
    pub start: f64,
    /// End (next move, or infinity for the last), s.
    pub end: f64,
    pub position: MassPosition,
    /// Equilibrium angle at the stretch's start, without drift: `zero_angle + sign tau / kappa`, rad.
    pub equilibrium: f64,
    /// Cosine coefficient of the transient, rad.
    pub c1: f64,
    /// Sine coefficient of the transient, rad.
    pub c2: f64,
}

/// The truth of a simulated run.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct MotionTruth {
    /// Amplitude decay rate `gamma`, 1/s.
    pub gamma: f64,
    /// Damped angular frequency `omega_d`, rad/s.
    pub omega_d: f64,
    /// Natural angular frequency `omega_0 = sqrt(kappa / I)`, rad/s.
    pub omega0: f64,
    /// Natural period `2 pi / omega_0`, s.
    pub period0: f64,
    /// Damped period `2 pi / omega_d`, s.
    pub period_d: f64,
    /// Deflection `theta_G = tau / kappa`, rad (half the angle between the A and B equilibria).
    pub theta_g: f64,
    /// Angular acceleration just after an A-B or B-A move, `2 tau / I`, rad/s^2.
    pub alpha_swap: f64,
    /// Drift rate, rad/s.
    pub drift: f64,
    pub pieces: Vec<Piece>,
}

/// A solved run: evaluate the noise-free angle anywhere, or sample it with noise.
#[derive(Debug, Clone, PartialEq)]
pub struct Trajectory {
    pub config: MotionConfig,
    pub truth: MotionTruth,
}

impl Trajectory {
    /// Solve the equation of motion piece by piece.
    pub fn new(cfg: &MotionConfig) -> Result<Self, MotionError> {
        let (gamma, omega0, omega_d) = oscillator(cfg)?;
        check_moves(&cfg.moves)?;
        let theta_g = cfg.torque / cfg.kappa;
        let pieces = solve_pieces(cfg, gamma, omega_d, theta_g);
        Ok(Self {
            config: cfg.clone(),
            truth: MotionTruth {
                gamma,
                omega_d,
                omega0,
                period0: 2.0 * PI / omega0,
                period_d: 2.0 * PI / omega_d,
                theta_g,
                alpha_swap: 2.0 * cfg.torque / cfg.inertia,
                drift: cfg.drift,
                pieces,
            },
        })
    }

    /// The piece in force at time `t` (the first for `t < 0`).
    pub fn piece_at(&self, t: f64) -> &Piece {
        let p = &self.truth.pieces;
        let idx = p.partition_point(|q| q.start <= t);
        &p[idx.saturating_sub(1)]
    }

    /// Noise-free angle at time `t`, rad (including drift).
    pub fn angle(&self, t: f64) -> f64 {
        let p = self.piece_at(t);
        let (u, _) = transient(p, self.truth.gamma, self.truth.omega_d, t - p.start);
        p.equilibrium + u + self.config.drift * t
    }

    /// Noise-free angular velocity at time `t`, rad/s (including drift).
    pub fn velocity(&self, t: f64) -> f64 {
        let p = self.piece_at(t);
        let (_, v) = transient(p, self.truth.gamma, self.truth.omega_d, t - p.start);
        v + self.config.drift
    }

    /// Angles sampled every `dt` from `t0` to `t1` inclusive, with white Gaussian noise of standard
    /// deviation `noise` rad (seeded, reproducible). Returns `(t, theta)` pairs.
    pub fn sample(
        &self,
        t0: f64,
        t1: f64,
        dt: f64,
        noise: f64,
        seed: u64,
    ) -> Result<Vec<(f64, f64)>, MotionError> {
        if !(dt > 0.0 && dt.is_finite() && t1 >= t0 && t0.is_finite() && t1.is_finite()) {
            return Err(MotionError::Sampling(format!(
                "need dt > 0 and t1 >= t0 (got dt = {dt}, t0 = {t0}, t1 = {t1})"
            )));
        }
        if !(noise >= 0.0 && noise.is_finite()) {
            return Err(MotionError::Sampling(format!(
                "noise {noise} must be >= 0 and finite"
            )));
        }
        let n = ((t1 - t0) / dt + 1e-9).floor() as usize + 1;
        let mut rng = StdRng::seed_from_u64(seed);
        let normal = Normal::new(0.0, noise.max(f64::MIN_POSITIVE))
            .map_err(|e| MotionError::Sampling(e.to_string()))?;
        Ok((0..n)
            .map(|k| {
                let t = t0 + k as f64 * dt;
                let e = if noise > 0.0 {
                    normal.sample(&mut rng)
                } else {
                    0.0
                };
                (t, self.angle(t) + e)
            })
            .collect())
    }
}

/// Transient and its derivative at `s` seconds into a piece.
fn transient(p: &Piece, gamma: f64, omega_d: f64, s: f64) -> (f64, f64) {
    let e = (-gamma * s).exp();
    let (sn, cs) = (omega_d * s).sin_cos();
    let u = e * (p.c1 * cs + p.c2 * sn);
    let v = e * ((-gamma * p.c1 + omega_d * p.c2) * cs + (-gamma * p.c2 - omega_d * p.c1) * sn);
    (u, v)
}

/// The oscillator's rates from the apparatus: `(gamma, omega_0, omega_d)`; refuses a non-positive
/// inertia or torsion constant, a non-positive damping time and an over-damped oscillator.
fn oscillator(cfg: &MotionConfig) -> Result<(f64, f64, f64), MotionError> {
    let (i, k) = (cfg.inertia, cfg.kappa);
    if !(i.is_finite() && k.is_finite() && i > 0.0 && k > 0.0) {
        return Err(MotionError::NotPositive {
            inertia: i,
            kappa: k,
        });
    }
    if cfg.damping_time.is_nan() || cfg.damping_time <= 0.0 {
        return Err(MotionError::BadDamping(cfg.damping_time));
    }
    let gamma = if cfg.damping_time.is_infinite() {
        0.0
    } else {
        1.0 / cfg.damping_time
    };
    let omega0 = (k / i).sqrt();
    if gamma >= omega0 {
        return Err(MotionError::Overdamped { gamma, omega0 });
    }
    let omega_d = (omega0 * omega0 - gamma * gamma).sqrt();
    Ok((gamma, omega0, omega_d))
}

/// Mass moves must come after `t = 0` and each after the one before.
fn check_moves(moves: &[MassMove]) -> Result<(), MotionError> {
    for (n, w) in moves.windows(2).enumerate() {
        if w[1].t.partial_cmp(&w[0].t) != Some(std::cmp::Ordering::Greater) {
            return Err(MotionError::Unordered {
                index: n + 1,
                t: w[1].t,
            });
        }
    }
    if let Some(m) = moves.first() {
        if m.t.is_nan() || m.t <= 0.0 {
            return Err(MotionError::Unordered { index: 0, t: m.t });
        }
    }
    Ok(())
}

/// The stretches of constant torque, each with the transient that carries the angle and angular
/// velocity over from the one before.
fn solve_pieces(cfg: &MotionConfig, gamma: f64, omega_d: f64, theta_g: f64) -> Vec<Piece> {
    let eq = |p: MassPosition| cfg.zero_angle + p.sign() * theta_g;
    let mut pieces = Vec::with_capacity(cfg.moves.len() + 1);
    // Transient variable u = theta - theta_eq (drift is added on top at evaluation).
    let mut start = 0.0;
    let mut pos = cfg.initial_position;
    let mut u0 = cfg.initial_offset;
    let mut v0 = cfg.initial_velocity;
    for idx in 0..=cfg.moves.len() {
        let end = cfg.moves.get(idx).map_or(f64::INFINITY, |m| m.t);
        // u(s) = e^{-gs}(c1 cos ws + c2 sin ws); u(0) = c1; u'(0) = -g c1 + w c2.
        let c1 = u0;
        let c2 = (v0 + gamma * c1) / omega_d;
        let piece = Piece {
            start,
            end,
            position: pos,
            equilibrium: eq(pos),
            c1,
            c2,
        };
        pieces.push(piece);
        if let Some(m) = cfg.moves.get(idx) {
            let s = m.t - start;
            let (u, v) = transient(&piece, gamma, omega_d, s);
            // Angle and velocity are continuous; the equilibrium jumps.
            u0 = u + piece.equilibrium - eq(m.to);
            v0 = v;
            start = m.t;
            pos = m.to;
        }
    }
    pieces
}

#[cfg(test)]
mod tests {
    use super::*;

    fn cfg() -> MotionConfig {
        MotionConfig {
            inertia: 2.0e-4,
            kappa: 2.0e-4 * (2.0 * PI / 400.0f64).powi(2),
            damping_time: 1500.0,
            torque: 3.0e-11,
            initial_position: MassPosition::A,
            moves: vec![
                MassMove {
                    t: 1000.0,
                    to: MassPosition::B,
                },
                MassMove {
                    t: 2100.0,
                    to: MassPosition::A,
                },
            ],
            zero_angle: 1e-3,
            drift: 1e-9,
            initial_offset: 2e-4,
            initial_velocity: -1e-6,
        }
    }

    #[test]
    fn satisfies_the_equation_of_motion() {
        let tr = Trajectory::new(&cfg()).unwrap();
        let c = &tr.config;
        let b = 2.0 * c.inertia / c.damping_time;
        // Central second difference of the noise-free angle (drift removed: it is not a torque).
        let h = 0.05;
        for &t in &[10.0, 500.0, 999.0, 1001.0, 1700.0, 2500.0] {
            let th = |t: f64| tr.angle(t) - c.drift * t;
            let acc = (th(t + h) - 2.0 * th(t) + th(t - h)) / (h * h);
            let vel = (th(t + h) - th(t - h)) / (2.0 * h);
            let tau = tr.piece_at(t).position.sign() * c.torque + c.kappa * c.zero_angle;
            let lhs = c.inertia * acc + b * vel + c.kappa * th(t);
            assert!((lhs - tau).abs() < 1e-6 * c.torque, "t={t} {lhs} {tau}");
        }
    }

    #[test]
    fn continuous_across_moves_and_starts_as_asked() {
        let tr = Trajectory::new(&cfg()).unwrap();
        for m in &tr.config.moves {
            let a = tr.angle(m.t - 1e-7);
            let b = tr.angle(m.t + 1e-7);
            // A jump would be of order theta_g (6e-4 rad); 2e-7 s of motion moves it < 1e-10.
            assert!((a - b).abs() < 1e-10, "{a} {b}");
            let va = tr.velocity(m.t - 1e-7);
            let vb = tr.velocity(m.t + 1e-7);
            assert!((va - vb).abs() < 1e-12);
        }
        let c = &tr.config;
        assert!(
            (tr.angle(0.0) - (c.zero_angle + tr.truth.theta_g + c.initial_offset)).abs() < 1e-15
        );
        assert!((tr.velocity(0.0) - (c.initial_velocity + c.drift)).abs() < 1e-15);
    }

    #[test]
    fn bad_configs_are_refused() {
        let mut c = cfg();
        c.damping_time = 10.0;
        assert!(matches!(
            Trajectory::new(&c),
            Err(MotionError::Overdamped { .. })
        ));
        let mut c = cfg();
        c.moves.swap(0, 1);
        assert!(matches!(
            Trajectory::new(&c),
            Err(MotionError::Unordered { .. })
        ));
    }
}
