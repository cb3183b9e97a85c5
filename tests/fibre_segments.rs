//! A fibre trial's track with several segments of free swing: one period per segment, and a warning
//! when they disagree.

mod support;

use spotlever::plan::segment_periods::periods_from_track;
use spotlever::spot::{SpotFix, SpotStatus};
use spotlever::track::{TrackRow, TrackWriter};
use spotlever::units::{PixelPoint, ScreenPoint, Seconds};
use std::f64::consts::PI;
use std::path::Path;
use support::cli::spotlever;

/// Decay time of the swing, s.
const TAU: f64 = 3000.0;

/// Write a track of segments `(damped period s, rest position mm, duration s)` drawn here from the
/// damped sinusoid in closed form `x = x_rest + A exp(-t/tau) cos(2 pi t / T_d)`, sampled every 2 s
/// with 0.02 mm of pseudo-random noise (a fixed linear congruential generator). The first swing is
/// 5 mm; each segment lasts whole periods, so it ends at a turning point, and the next (the rest
/// position moved, as when the masses are moved) starts there from rest: `A = x_end - x_rest`.
fn write_track(path: &Path, segments: &[(f64, f64, f64)]) {
    let mut w = TrackWriter::create(path, true).unwrap();
    let (mut t0, mut frame, mut seed) = (0.0, 0u64, 12345u64);
    let mut x_end = segments[0].1 + 5.0;
    for &(period, rest, duration) in segments {
        let amplitude = x_end - rest;
        x_end = rest + amplitude * (-duration / TAU).exp();
        let mut s = 0.0;
        while s < duration {
            seed = seed
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            let u = (seed >> 11) as f64 / (1u64 << 53) as f64 - 0.5;
            let x_mm =
                rest + amplitude * (-s / TAU).exp() * (2.0 * PI * s / period).cos() + 0.07 * u;
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
            let row = TrackRow {
                frame,
                t: Seconds(t0 + s),
                fix,
                screen: Some(ScreenPoint { x_mm, y_mm: 0.0 }),
            };
            w.write(&row).unwrap();
            frame += 1;
            s += 2.0;
        }
        t0 += duration;
    }
    w.flush().unwrap();
}

/// The natural period `2 pi / omega_0` of a swing of damped period `t_d`:
/// `omega_0^2 = omega_d^2 + 1 / tau^2` (the damped harmonic oscillator).
fn natural(t_d: f64) -> f64 {
    2.0 * PI / ((2.0 * PI / t_d).powi(2) + TAU.powi(-2)).sqrt()
}

#[test]
fn each_segment_gets_its_own_period() {
    let dir = tempfile::tempdir().unwrap();
    let track = dir.path().join("swing.csv");
    write_track(&track, &[(320.0, 0.0, 2560.0), (320.0, 3.0, 2560.0)]);
    let p = periods_from_track(&track).unwrap();
    let fitted: Vec<_> = p
        .segments
        .iter()
        .filter_map(|s| s.period.clone().ok())
        .collect();
    assert_eq!(fitted.len(), 2, "{:?}", p.segments);
    let truth = natural(320.0);
    for m in &fitted {
        // The fit's own standard uncertainty sets the tolerance (three of them).
        assert!((m.value - truth).abs() < 3.0 * m.u, "{m} vs {truth}");
    }
    assert!(
        (p.period.value - truth).abs() < 3.0 * p.period.u,
        "{} vs {truth}",
        p.period
    );
    assert!(p.disagreeing.is_empty(), "{:?}", p.segments);
}

#[test]
fn disagreeing_segments_are_warned_about() {
    let dir = tempfile::tempdir().unwrap();
    let track = dir.path().join("swing.csv");
    write_track(&track, &[(320.0, 0.0, 2560.0), (340.0, 3.0, 2720.0)]);
    let p = periods_from_track(&track).unwrap();
    assert_eq!(p.disagreeing, vec![(0, 1)], "{:?}", p.segments);
    let trials = dir.path().join("trials.toml");
    std::fs::write(
        &trials,
        "[[trial]]\nname = \"W50\"\nmaterial = \"tungsten\"\ndiameter = \"50 um\"\nlength = \"300 mm\"\ninertia = \"1e-5 kg m^2\"\ntrack = \"swing.csv\"\n",
    )
    .unwrap();
    let out = spotlever(["fibre", trials.to_str().unwrap()]);
    out.assert_ok();
    assert!(out.stdout.contains("segment 2"), "{}", out.stdout);
    assert!(out.stderr.contains("disagree"), "{}", out.stderr);
}
