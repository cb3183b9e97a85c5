//! An independent simulated run for the analysis tests: the equation of motion
//! `I theta'' + (2 I / tau_d) theta' + kappa (theta - zero) = torque(t)` integrated by classical
//! fourth-order Runge-Kutta in this file (not the project's closed-form generator), with mass moves
//! that take a given time (the torque ramps linearly from one position's value to the other's) and
//! white Gaussian noise. The apparatus' constants (inertia, kappa, torque for CODATA 2018 G) come
//! from `MotionConfig::from_setup`, so the truth is the G the analysis should find.
#![allow(dead_code)]

use rand::rngs::StdRng;
use rand::SeedableRng;
use rand_distr::{Distribution, Normal};
use spotlever::analysis::{Event, Sample};
use spotlever::physics::G_CODATA_2018;
use spotlever::setup::Setup;
use spotlever::synth::motion::MotionConfig;

/// The simulated run's description.
#[derive(Debug, Clone)]
pub struct World {
    /// Natural period, s; amplitude 1/e time, s.
    pub period: f64,
    pub damping_time: f64,
    /// Start of each move (s), and how long each move takes (s; 0 for an instantaneous move).
    pub moves: Vec<f64>,
    pub move_duration: f64,
    /// Angle at the start relative to the first equilibrium, rad.
    pub initial_offset: f64,
    /// Swings stopped by hand: `(k, a)` puts the beam at rest `a` rad from its new equilibrium as
    /// move `k` (0-based) ends, leaving a quiet segment of amplitude `a`.
    pub calm: Vec<(usize, f64)>,
    /// Length of the run, s, and the sampling interval, s.
    pub length: f64,
    pub dt: f64,
    pub noise: f64,
    pub seed: u64,
}

impl World {
    /// Five segments of three periods each, 500 s period, 2000 s damping, sampled every 2 s.
    pub fn standard(noise: f64, seed: u64) -> Self {
        let period = 500.0;
        Self {
            period,
            damping_time: 2000.0,
            moves: (1..5).map(|k| k as f64 * 3.0 * period).collect(),
            move_duration: 0.0,
            initial_offset: 0.0,
            calm: Vec::new(),
            length: 15.0 * period,
            dt: 2.0,
            noise,
            seed,
        }
    }

    /// The samples, with the starting position A and the masses moved back and forth.
    pub fn samples(&self, setup: &Setup) -> Vec<Sample> {
        let cfg = MotionConfig::from_setup(setup, G_CODATA_2018, self.period, self.damping_time);
        let (inertia, kappa, tau) = (cfg.inertia, cfg.kappa, cfg.torque);
        let zero = 2e-3;
        let b = 2.0 * inertia / self.damping_time;
        // Torque sign at time t: +1 at A, -1 at B, linear in between during a move.
        let sign = |t: f64| -> f64 {
            let mut s = 1.0;
            for &m in &self.moves {
                if t >= m + self.move_duration {
                    s = -s;
                } else if t > m {
                    let f = (t - m) / self.move_duration;
                    return s * (1.0 - 2.0 * f);
                }
            }
            s
        };
        let accel = |t: f64, th: f64, om: f64| -> f64 {
            (tau * sign(t) - b * om - kappa * (th - zero)) / inertia
        };
        let mut th = zero + tau / kappa + self.initial_offset;
        let mut om = 0.0;
        let h = 0.25;
        let steps_per_sample = (self.dt / h).round() as usize;
        let n = (self.length / self.dt).floor() as usize + 1;
        let mut rng = StdRng::seed_from_u64(self.seed);
        let normal = Normal::new(0.0, self.noise.max(1e-300)).unwrap();
        let mut out = Vec::with_capacity(n);
        let mut t = 0.0;
        let mut calm = self.calm.clone();
        for k in 0..n {
            let e = if self.noise > 0.0 {
                normal.sample(&mut rng)
            } else {
                0.0
            };
            out.push(Sample {
                t: k as f64 * self.dt,
                theta: th + e,
            });
            for _ in 0..steps_per_sample {
                let (k1t, k1o) = (om, accel(t, th, om));
                let (k2t, k2o) = (
                    om + 0.5 * h * k1o,
                    accel(t + 0.5 * h, th + 0.5 * h * k1t, om + 0.5 * h * k1o),
                );
                let (k3t, k3o) = (
                    om + 0.5 * h * k2o,
                    accel(t + 0.5 * h, th + 0.5 * h * k2t, om + 0.5 * h * k2o),
                );
                let (k4t, k4o) = (om + h * k3o, accel(t + h, th + h * k3t, om + h * k3o));
                th += h / 6.0 * (k1t + 2.0 * k2t + 2.0 * k3t + k4t);
                om += h / 6.0 * (k1o + 2.0 * k2o + 2.0 * k3o + k4o);
                t += h;
                calm.retain(|&(j, a)| {
                    let end = self.moves[j] + self.move_duration;
                    if t < end {
                        return true;
                    }
                    th = zero + tau * sign(t) / kappa + a;
                    om = 0.0;
                    false
                });
            }
            t = (k + 1) as f64 * self.dt;
        }
        out
    }

    /// Events at the given move times (one row per move, labels B, A, B, ...), lines numbered as
    /// in a file with a header.
    pub fn events_at(times: &[f64]) -> Vec<Event> {
        times
            .iter()
            .enumerate()
            .map(|(k, &t)| Event {
                t,
                label: if k % 2 == 0 { "B" } else { "A" }.into(),
                line: k + 2,
            })
            .collect()
    }

    /// The moves' true times: the middle of each move.
    pub fn true_moves(&self) -> Vec<f64> {
        self.moves
            .iter()
            .map(|m| m + 0.5 * self.move_duration)
            .collect()
    }
}
