//! A fibre trial whose period is fitted from a track CSV of a free swing.

use spotlever::plan::fibre::{kappa_of, SectionValues};
use spotlever::plan::trial::{evaluate, parse_trials, period_from_track, PeriodSource};
use spotlever::spot::{SpotFix, SpotStatus};
use spotlever::synth::motion::{MassPosition, MotionConfig, Trajectory};
use spotlever::track::{TrackRow, TrackWriter};
use spotlever::units::{PixelPoint, ScreenPoint, Seconds};

#[test]
fn period_fitted_from_a_track_gives_the_shear_modulus() {
    // Tungsten 50 um, 300 mm, 161 GPa, test body 1e-5 kg m^2: kappa = pi G r^4 / (2 l).
    let (g, d, l, inertia) = (161e9, 50e-6, 0.3, 1e-5);
    let kappa = kappa_of(g, &SectionValues::Round(d), l);
    let config = MotionConfig {
        inertia,
        kappa,
        damping_time: 2000.0,
        initial_position: MassPosition::Away,
        initial_offset: 5e-3,
        ..MotionConfig::default()
    };
    let tr = Trajectory::new(&config).unwrap();
    let t0 = tr.truth.period0;
    // Swing on a 1 m flat-screen lever sampled every second for ten periods, 0.02 mm noise.
    let samples = tr.sample(0.0, 10.0 * t0, 1.0, 1e-5, 3).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let track = dir.path().join("swing.csv");
    let mut w = TrackWriter::create(&track, true).unwrap();
    for (i, (t, theta)) in samples.iter().enumerate() {
        let x_mm = 1000.0 * (2.0 * theta).tan();
        let fix = SpotFix {
            position: Some(PixelPoint {
                x: 100.0 + 3.0 * x_mm,
                y: 50.0,
            }),
            peak: 100.0,
            integral: 1000.0,
            width_px: 2.0,
            saturated_px: 0,
            snr: 50.0,
            status: SpotStatus::Ok,
        };
        w.write(&TrackRow {
            frame: i as u64,
            t: Seconds(*t),
            fix,
            screen: Some(ScreenPoint { x_mm, y_mm: 0.0 }),
        })
        .unwrap();
    }
    w.flush().unwrap();
    drop(w);
    let p = period_from_track(&track).unwrap();
    // The fit's own standard uncertainty sets the tolerance (three of them).
    assert!((p.value - t0).abs() < 3.0 * p.u, "{p} vs {t0}");
    assert!(p.u < 1e-3 * t0);
    let text = "[[trial]]\nname = \"W50\"\nmaterial = \"tungsten\"\ndiameter = \"50 um\"\nlength = \"300 mm\"\ninertia = \"1e-5 kg m^2\"\ntrack = \"swing.csv\"\n";
    let trials = parse_trials(text, &dir.path().join("trials.toml")).unwrap();
    let PeriodSource::Track(path) = &trials[0].period else {
        panic!("a track was given")
    };
    let r = evaluate(&trials[0], period_from_track(path).unwrap()).unwrap();
    // G_s ~ T^-2: its relative uncertainty is twice the period's.
    assert!((r.shear_modulus_pa.value / g - 1.0).abs() < 3.0 * 2.0 * p.relative());
}
