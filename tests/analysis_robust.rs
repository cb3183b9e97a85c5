//! Robust segment fits: stray samples are left out and counted, and a segment whose swing is lost in
//! the noise neither spoils the period nor G.
//!
//! The runs come from `analysis_world` (an RK4 integration written for the tests), made with
//! CODATA 2018 G = 6.67430e-11 m^3 kg^-1 s^-2.

mod analysis_common;
mod analysis_world;

use analysis_common::exact_setup;
use analysis_world::World;
use spotlever::analysis::{analyze, Analysis, AnalysisOptions, Event};
use spotlever::physics::G_CODATA_2018;

fn opts() -> AnalysisOptions {
    AnalysisOptions {
        mc_draws: 2_000,
        ..Default::default()
    }
}

fn events(w: &World) -> Vec<Event> {
    World::events_at(&w.moves)
}

#[test]
fn three_stray_samples_are_left_out_and_counted() {
    let setup = exact_setup();
    let w = World::standard(1e-5, 21);
    let clean = w.samples(&setup);
    let mut dirty = clean.clone();
    // Three samples in segment 3 (3000 s to 4500 s) thrown 30 mm and 36 mm along a screen 2.5 m
    // away (about 400 and 475 px at 13 px/mm): angles x / (2 L).
    for (t, dx_mm) in [(3210.0, 30.0), (3650.0, -30.0), (4102.0, 36.0)] {
        let k = (t / w.dt) as usize;
        dirty[k].theta += dx_mm * 1e-3 / (2.0 * 2.5);
    }
    let a = analyze(&clean, &setup, Some(&events(&w)), &opts()).unwrap();
    let b = analyze(&dirty, &setup, Some(&events(&w)), &opts()).unwrap();
    assert_eq!(a.outliers, 0);
    assert_eq!(b.outliers, 3);
    assert_eq!(b.segments[2].outliers, 3);
    assert!(b
        .warnings
        .iter()
        .any(|m| m.contains("segment 3") && m.contains("3 stray samples")));
    let d = b.g.value / a.g.value - 1.0;
    eprintln!(
        "3 stray samples: G changed by {:+.4} % ({:.2} u)",
        100.0 * d,
        (b.g.value - a.g.value) / a.g.u
    );
    assert!(d.abs() < 2e-3, "G changed by {:.3} %", 100.0 * d);
}

/// One run with segment 3 calmed to a swing of twice the noise; returns the analysis and whether
/// G lies within 4 u of the truth (4 sigma: common practice, no source).
fn quiet_run(seed: u64) -> (Analysis, bool) {
    let setup = exact_setup();
    let noise = 1e-5;
    let mut w = World::standard(noise, seed);
    w.initial_offset = 1e-3;
    w.calm = vec![(1, 2.0 * noise)];
    let a = analyze(&w.samples(&setup), &setup, Some(&events(&w)), &opts()).unwrap();
    let ok = (a.g.value - G_CODATA_2018).abs() < 4.0 * a.g.u;
    (a, ok)
}

/// The quiet segment either gives no period of its own (named in its note) or one that agrees
/// with the true 500 s within 4 of its own u.
fn check_quiet_segment(a: &Analysis, seed: u64) {
    let s = &a.segments[2];
    if s.used_for_period {
        let p = s.period.unwrap();
        assert!(
            (p.value - 500.0).abs() < 4.0 * p.u,
            "seed {seed}: quiet segment's period {} ± {}",
            p.value,
            p.u
        );
    } else {
        let note = s.note.as_deref().unwrap_or("");
        assert!(note.starts_with("segment 3 (A,"), "seed {seed}: {note}");
    }
}

fn quiet_runs(count: u64) {
    let mut bad = Vec::new();
    let (mut held, mut worst) = (0, 0.0f64);
    for seed in 0..count {
        let (a, ok) = quiet_run(100 + seed);
        check_quiet_segment(&a, seed);
        held += usize::from(!a.segments[2].used_for_period);
        worst = worst.max((a.g.value - G_CODATA_2018).abs() / a.g.u);
        if !ok {
            bad.push((seed, a.g.value, a.g.u));
        }
    }
    eprintln!(
        "{count} runs: quiet segment held to the others' period in {held}; largest |G - G_true| = {worst:.2} u"
    );
    assert!(bad.is_empty(), "G more than 4 u from the truth: {bad:?}");
}

#[test]
fn a_quiet_segment_spoils_neither_the_period_nor_g() {
    quiet_runs(12);
}

#[test]
#[ignore = "200 runs: cargo test --test analysis_robust -- --ignored"]
fn a_quiet_segment_spoils_neither_the_period_nor_g_in_200_runs() {
    quiet_runs(200);
}

#[test]
fn stray_samples_make_no_false_moves_in_the_trace() {
    let setup = exact_setup();
    let mut w = World::standard(1e-5, 23);
    w.initial_offset = 1e-3;
    let mut s = w.samples(&setup);
    // The same three throws as above, 30 mm to 36 mm along the screen.
    for (t, dx_mm) in [(3210.0, 30.0), (3650.0, -30.0), (4102.0, 36.0)] {
        s[(t / w.dt) as usize].theta += dx_mm * 1e-3 / (2.0 * 2.5);
    }
    let a = analyze(&s, &setup, None, &opts()).unwrap();
    assert_eq!(a.moves.len(), 4, "{:?}", a.moves);
    assert_eq!(a.outliers, 3);
    assert!(
        (a.g.value - G_CODATA_2018).abs() < 4.0 * a.g.u,
        "G = {} ± {}",
        a.g.value,
        a.g.u
    );
}
