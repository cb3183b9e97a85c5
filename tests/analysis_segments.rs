//! Segments: moves found in the trace with drift and noise, and the bad inputs the analysis must
//! handle (short segment, non-finite rows and lost-spot gaps, no move and no events).

mod analysis_common;

use analysis_common::{exact_setup, run};
use spotlever::analysis::{analyze, AnalysisError, AnalysisOptions, Event, Sample};
use spotlever::physics::G_CODATA_2018;
use spotlever::synth::motion::{MassMove, MassPosition, MotionConfig, Trajectory};

fn opts() -> AnalysisOptions {
    AnalysisOptions {
        mc_draws: 2_000,
        ..Default::default()
    }
}

#[test]
fn every_move_is_found_within_a_tenth_of_a_period_with_drift() {
    let setup = exact_setup();
    let period = 500.0;
    let mut worst: f64 = 0.0;
    for seed in 0..20u64 {
        // Irregular move times, a drift of 0.6 theta_G per hour, noise 0.5 % of theta_G.
        let mut cfg = MotionConfig::from_setup(&setup, G_CODATA_2018, period, 1500.0);
        let jitter = (seed as f64 * 37.0) % 300.0;
        let times = [
            1400.0 + jitter,
            2900.0,
            4300.0 + jitter * 0.5,
            6000.0,
            7300.0,
        ];
        cfg.moves = times
            .iter()
            .enumerate()
            .map(|(k, &t)| MassMove {
                t,
                to: if k % 2 == 0 {
                    MassPosition::B
                } else {
                    MassPosition::A
                },
            })
            .collect();
        cfg.drift = 8e-10;
        cfg.initial_offset = 1e-3;
        let tr = Trajectory::new(&cfg).unwrap();
        let samples: Vec<Sample> = tr
            .sample(0.0, 8800.0, 2.0, 2.5e-5, seed)
            .unwrap()
            .into_iter()
            .map(|(t, theta)| Sample { t, theta })
            .collect();
        let a = analyze(&samples, &setup, None, &opts()).unwrap();
        assert_eq!(
            a.moves.len(),
            times.len(),
            "seed {seed}: found {:?}",
            a.moves
        );
        for (found, truth) in a.moves.iter().zip(&times) {
            worst = worst.max((found - truth).abs());
            assert!(
                (found - truth).abs() <= period / 10.0,
                "seed {seed}: {found} vs {truth}"
            );
        }
    }
    eprintln!("largest move-time error over 20 runs: {worst:.2} s (period 500 s)");
}

#[test]
fn a_short_segment_is_warned_about_and_left_out_of_the_period() {
    let setup = exact_setup();
    let r = run(4, 3.0, 2.0, 1e-5, 0.0, 3);
    // Add a move 1.2 periods before the end: the last segment is too short for its own period.
    let mut events = r.events.clone();
    let t_end = r.samples.last().unwrap().t;
    events.push(Event::new(t_end - 600.0, "extra"));
    let a = analyze(&r.samples, &setup, Some(&events), &opts()).unwrap();
    let last = a.segments.last().unwrap();
    assert!(!last.used_for_period);
    assert!(last.period.is_none());
    let note = last.note.as_deref().unwrap();
    // 600 s against the spectrum's estimate of the 500 s period: about 1.2 periods.
    assert!(note.contains("(1.1") || note.contains("(1.2"), "{note}");
    assert!(
        note.contains("too short for its own period")
            && note.contains("periods, 1.5 needed")
            && note.contains("fitted with the other segments' period"),
        "{note}"
    );
    // The label "extra" is neither A nor B: warned about, and read as a move to the other position.
    assert!(
        a.warnings
            .iter()
            .any(|w| w.contains("\"extra\"") && w.contains("neither A nor B")),
        "{:?}",
        a.warnings
    );
    assert!(a.warnings.iter().any(|w| w == note));
    assert!(a.segments[1].used_for_period);
}

#[test]
fn non_finite_rows_and_lost_spot_gaps_are_fitted_over_honestly() {
    let setup = exact_setup();
    let r = run(5, 3.0, 2.0, 2e-5, 1e-10, 11);
    let mut samples = r.samples.clone();
    // NaN and infinite angles here and there, and two lost-spot gaps (rows simply missing).
    for k in (50..samples.len()).step_by(97) {
        samples[k].theta = if k % 2 == 0 { f64::NAN } else { f64::INFINITY };
    }
    samples.retain(|s| !(2000.0..2300.0).contains(&s.t) && !(5200.0..5350.0).contains(&s.t));
    let nan_count = samples.iter().filter(|s| !s.theta.is_finite()).count();
    let a = analyze(&samples, &setup, Some(&r.events), &opts()).unwrap();
    assert_eq!(a.dropped_nonfinite, nan_count);
    assert!(a.warnings.iter().any(|w| w.contains("non-finite")));
    assert_eq!(a.gaps.len(), 2, "{:?}", a.gaps);
    assert!(a.g.value.is_finite() && a.g.u.is_finite() && a.g.u > 0.0);
    // No interpolation: the fitted points are only those present, less the settling time left out
    // around each move (a twentieth of the spectrum's period before it, a tenth after it, the
    // defaults), and no stray sample is seen in Gaussian noise.
    let p = a.spectrum.period();
    let settling = |t: f64| {
        a.moves
            .iter()
            .any(|&m| t >= m - 0.05 * p && t < m + 0.1 * p)
    };
    let expected = samples
        .iter()
        .filter(|s| s.theta.is_finite() && !settling(s.t))
        .count();
    let fitted: usize = a.segments.iter().map(|s| s.points).sum();
    assert_eq!(fitted, expected);
    assert_eq!(a.outliers, 0);
    // Unbiased within its own uncertainty (4 sigma: a real error, not bad luck).
    assert!(
        (a.g.value - G_CODATA_2018).abs() < 4.0 * a.g.u,
        "{} ± {}",
        a.g.value,
        a.g.u
    );
}

#[test]
fn no_move_and_no_events_says_how_to_give_them() {
    let setup = exact_setup();
    let r = run(1, 8.0, 2.0, 1e-5, 0.0, 2);
    // A single free swing: start away from equilibrium.
    let mut cfg = r.trajectory.config.clone();
    cfg.initial_offset = 2e-3;
    let tr = Trajectory::new(&cfg).unwrap();
    let samples: Vec<Sample> = tr
        .sample(0.0, 4000.0, 2.0, 1e-5, 9)
        .unwrap()
        .into_iter()
        .map(|(t, theta)| Sample { t, theta })
        .collect();
    let e = analyze(&samples, &setup, None, &opts()).unwrap_err();
    assert!(matches!(e, AnalysisError::NoMoves), "{e}");
    let msg = e.to_string();
    assert!(
        msg.contains("--events") && msg.contains("t_s,label"),
        "{msg}"
    );
}

#[test]
fn samples_out_of_time_order_are_refused_with_their_index() {
    let setup = exact_setup();
    let r = run(3, 3.0, 2.0, 0.0, 0.0, 1);
    let mut s = r.samples.clone();
    s.swap(100, 101);
    let e = analyze(&s, &setup, Some(&r.events), &opts())
        .unwrap_err()
        .to_string();
    assert!(e.contains("sample 101") && e.contains("time order"), "{e}");
}
