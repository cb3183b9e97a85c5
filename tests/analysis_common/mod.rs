//! Shared builders for the analysis tests: an invented apparatus and synthesized runs with known truth.
#![allow(dead_code)]

use spotlever::analysis::{Event, Sample};
use spotlever::physics::G_CODATA_2018;
use spotlever::setup::Setup;
use spotlever::synth::motion::{MassMove, MassPosition, MotionConfig, Trajectory};
use std::path::Path;

/// An invented apparatus, every value exact (the truth of the simulation).
pub const EXACT_SETUP: &str = r#"
[beam]
small_mass = "15 ± 0 g"
small_radius = "7.5 ± 0 mm"
arm = "50 ± 0 mm"
rod_mass = "10 ± 0 g"
rod_length = "100 ± 0 mm"
extra_inertia = "0 ± 0 kg m^2"
[sources]
large_mass = "1.5 ± 0 kg"
large_radius = "32 ± 0 mm"
separation = "46.5 ± 0 mm"
[lever]
screen_distance = "2.5 ± 0 m"
zero = "0 ± 0 mm"
scale = "flat"
"#;

pub fn exact_setup() -> Setup {
    Setup::parse(EXACT_SETUP, Path::new("exact.toml")).unwrap()
}

/// A run: `segments` segments of `seg_periods` periods each, masses swapped A-B-A-..., starting at
/// rest at the A equilibrium; period 500 s, damping time 2000 s; sampled every `dt` s.
pub struct Run {
    pub trajectory: Trajectory,
    pub samples: Vec<Sample>,
    pub events: Vec<Event>,
    pub g_true: f64,
}

pub fn run(segments: usize, seg_periods: f64, dt: f64, noise: f64, drift: f64, seed: u64) -> Run {
    let setup = exact_setup();
    let period = 500.0;
    let mut cfg = MotionConfig::from_setup(&setup, G_CODATA_2018, period, 2000.0);
    let seg_len = seg_periods * period;
    cfg.initial_position = MassPosition::A;
    cfg.moves = (1..segments)
        .map(|k| MassMove {
            t: k as f64 * seg_len,
            to: if k % 2 == 0 {
                MassPosition::A
            } else {
                MassPosition::B
            },
        })
        .collect();
    cfg.zero_angle = 2e-3;
    cfg.drift = drift;
    let trajectory = Trajectory::new(&cfg).unwrap();
    let samples = trajectory
        .sample(0.0, segments as f64 * seg_len, dt, noise, seed)
        .unwrap()
        .into_iter()
        .map(|(t, theta)| Sample { t, theta })
        .collect();
    let events = std::iter::once(Event::new(0.0, "A"))
        .chain(
            cfg.moves
                .iter()
                .map(|m| Event::new(m.t, &format!("{:?}", m.to))),
        )
        .collect();
    Run {
        trajectory,
        samples,
        events,
        g_true: G_CODATA_2018,
    }
}
