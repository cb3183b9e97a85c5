//! Moves found in the trace when the oscillation is sampled sparsely (about ten samples a period),
//! and runs whose segments are all too short for the spectrum.
//!
//! The runs come from `analysis_world` (an RK4 integration written for the tests), made with
//! CODATA 2018 G = 6.67430e-11 m^3 kg^-1 s^-2.

mod analysis_common;
mod analysis_world;

use analysis_common::exact_setup;
use analysis_world::World;
use spotlever::analysis::{analyze, AnalysisOptions};
use spotlever::physics::G_CODATA_2018;

fn opts() -> AnalysisOptions {
    AnalysisOptions {
        mc_draws: 2_000,
        ..Default::default()
    }
}

/// Five segments of three periods of `period` s, sampled every `dt` s.
fn sparse(period: f64, dt: f64, seed: u64) -> World {
    let mut w = World::standard(1e-5, seed);
    w.period = period;
    w.dt = dt;
    w.moves = (1..5).map(|k| k as f64 * 3.0 * period).collect();
    w.length = 15.0 * period;
    w.initial_offset = 1e-3;
    w
}

#[test]
fn moves_are_found_with_ten_samples_a_period() {
    let setup = exact_setup();
    for (period, dt) in [(220.0, 10.0), (300.0, 30.0), (500.0, 45.0)] {
        for seed in 0..3 {
            let w = sparse(period, dt, seed);
            let a = analyze(&w.samples(&setup), &setup, None, &opts())
                .unwrap_or_else(|e| panic!("T {period} s, dt {dt} s, seed {seed}: {e}"));
            assert_eq!(a.moves.len(), 4, "T {period} s, dt {dt} s: {:?}", a.moves);
            for (m, t) in a.moves.iter().zip(&w.moves) {
                assert!(
                    (m - t).abs() < period / 10.0,
                    "T {period} s, dt {dt} s: move {m} s, true {t} s"
                );
            }
            assert!(
                (a.g.value - G_CODATA_2018).abs() < 4.0 * a.g.u,
                "T {period} s, dt {dt} s, seed {seed}: G = {} ± {}",
                a.g.value,
                a.g.u
            );
        }
    }
}

#[test]
fn segments_of_one_and_a_third_periods_still_give_the_period() {
    let setup = exact_setup();
    // Moves every 1.3 periods: no segment lasts the 1.5 periods asked for by default.
    let mut w = sparse(500.0, 5.0, 4);
    w.moves = (1..8).map(|k| k as f64 * 650.0).collect();
    w.length = 8.0 * 650.0;
    let ev = World::events_at(&w.moves);
    let a = analyze(&w.samples(&setup), &setup, Some(&ev), &opts()).unwrap();
    assert!(
        a.warnings
            .iter()
            .any(|m| m.contains("no segment lasts 1.5 periods")),
        "{:?}",
        a.warnings
    );
    // The period within 4 of its u of the true 500 s, G within 4 u of the truth.
    assert!(
        (a.period.value - 500.0).abs() < 4.0 * a.period.u,
        "{:?}",
        a.period
    );
    assert!(
        (a.g.value - G_CODATA_2018).abs() < 4.0 * a.g.u,
        "G = {} ± {}",
        a.g.value,
        a.g.u
    );
}

#[test]
fn segments_all_too_short_are_each_named_with_their_length() {
    let setup = exact_setup();
    // Moves every 0.8 periods: no segment lasts even one period.
    let mut w = sparse(500.0, 5.0, 4);
    w.moves = (1..8).map(|k| k as f64 * 400.0).collect();
    w.length = 8.0 * 400.0;
    let ev = World::events_at(&w.moves);
    let e = analyze(&w.samples(&setup), &setup, Some(&ev), &opts())
        .unwrap_err()
        .to_string();
    for k in 1..=8 {
        assert!(
            e.contains(&format!("segment {k} (")),
            "segment {k} not named: {e}"
        );
    }
    assert!(e.contains("too short for its own period (0."), "{e}");
    assert!(!e.contains("fitted with the other segments"), "{e}");
}
