//! The planner's period and deflection against what the analyzer finds on a synthetic run of the same
//! design (motion simulated with the plan's torque for CODATA 2018 G and the plan's own torsion constant, sampled with noise).

use spotlever::analysis::{analyze, AnalysisOptions, Event, Sample};
use spotlever::plan::fibre::Fibre;
use spotlever::plan::predict::{predict, PlanOptions};
use spotlever::setup::Setup;
use spotlever::synth::motion::{MassMove, MassPosition, MotionConfig, Trajectory};
use std::path::Path;

const DESIGN: &str = r#"
[beam]
small_mass = "15.00 ± 0.02 g"
small_radius = "6.81 ± 0.02 mm"
arm = "50.0 ± 0.1 mm"
rod_mass = "10.0 ± 0.1 g"
rod_length = "100.0 ± 0.5 mm"
[sources]
large_mass = "1.500 ± 0.002 kg"
large_radius = "31.6 ± 0.1 mm"
separation = "46.0 ± 0.1 mm"
[lever]
screen_distance = "2.500 ± 0.003 m"
zero = "0 ± 0.5 mm"
scale = "flat"
[fibre]
material = "tungsten"
diameter = "30 ± 1 um"
length = "400 ± 2 mm"
"#;

#[test]
fn analyzer_finds_the_planned_period_and_deflection() {
    let setup = Setup::parse(DESIGN, Path::new("design.toml")).unwrap();
    let fibre = Fibre::from_setup(&setup).unwrap();
    let plan = predict(&setup, &fibre, &PlanOptions::default()).unwrap();
    // Simulate exactly the planned design: kappa from the fibre, G = CODATA 2018.
    let inertia = plan.inertia_kg_m2.value;
    let kappa = plan.kappa_n_m_per_rad.value;
    let seg = 3.0 * plan.period_s.value;
    let config = MotionConfig {
        inertia,
        kappa,
        damping_time: 1500.0,
        // The planner's torque: the pull on the whole beam, rod included (checked against a direct
        // integration of Newton's law in tests/analysis_rod_pull.rs).
        torque: plan.torque_n_m.value,
        initial_position: MassPosition::A,
        moves: vec![
            MassMove {
                t: seg,
                to: MassPosition::B,
            },
            MassMove {
                t: 2.0 * seg,
                to: MassPosition::A,
            },
            MassMove {
                t: 3.0 * seg,
                to: MassPosition::B,
            },
        ],
        drift: 1e-7,
        initial_offset: 3e-4,
        ..MotionConfig::default()
    };
    let trajectory = Trajectory::new(&config).unwrap();
    // 5 urad of angle noise: about 0.025 mm on a 2.5 m lever, a plain tracker's noise.
    let samples: Vec<Sample> = trajectory
        .sample(0.0, 4.0 * seg, 10.0, 5e-6, 7)
        .unwrap()
        .into_iter()
        .map(|(t, theta)| Sample { t, theta })
        .collect();
    let events: Vec<Event> = [(0.0, "A"), (seg, "B"), (2.0 * seg, "A"), (3.0 * seg, "B")]
        .iter()
        .map(|&(t, l)| Event::new(t, l))
        .collect();
    let opts = AnalysisOptions {
        mc_draws: 2_000,
        ..AnalysisOptions::default()
    };
    let a = analyze(&samples, &setup, Some(&events), &opts).unwrap();
    // The analyzer's statistical uncertainties set the tolerance (three standard uncertainties); the
    // planner's values are exact for this simulation.
    let dt = (a.period.value - plan.period_s.value).abs();
    assert!(
        dt < 3.0 * a.period.u,
        "period {} vs plan {}",
        a.period,
        plan.period_s.value
    );
    let th = a.deflection.theta_g;
    assert!(
        (th.value - plan.theta_rad.value).abs() < 3.0 * th.u,
        "theta_G {th} vs plan {}",
        plan.theta_rad.value
    );
}
