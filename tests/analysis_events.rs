//! Events are logged mass moves: the segment before the first move is kept, labels reach the result,
//! files written by `record` are read as they are, logged times that are early or that mark the start
//! of a slow move are refined from the data, and bad rows are named by file and line.
//!
//! The runs come from `analysis_world` (an RK4 integration written for the tests). The G each run
//! should give is CODATA 2018 G = 6.67430e-11 m^3 kg^-1 s^-2 (the value the world was made with).

mod analysis_common;
mod analysis_world;

use analysis_common::exact_setup;
use analysis_world::World;
use spotlever::analysis::{analyze, events::parse_events, Analysis, AnalysisOptions, Event};
use spotlever::physics::G_CODATA_2018;
use spotlever::record::events::EventLog;
use spotlever::units::Seconds;
use std::path::Path;

fn opts() -> AnalysisOptions {
    AnalysisOptions {
        mc_draws: 2_000,
        events_file: Some("events.csv".into()),
        ..Default::default()
    }
}

fn run(world: &World, events: &[Event], o: &AnalysisOptions) -> Analysis {
    analyze(
        &world.samples(&exact_setup()),
        &exact_setup(),
        Some(events),
        o,
    )
    .unwrap()
}

/// `|G - G_CODATA| < 4 u`: a real error, not bad luck (4 sigma, common practice, no source).
fn assert_unbiased(a: &Analysis, what: &str) {
    assert!(
        (a.g.value - G_CODATA_2018).abs() < 4.0 * a.g.u,
        "{what}: G = {} ± {}",
        a.g.value,
        a.g.u
    );
}

#[test]
fn one_logged_move_gives_two_segments_and_keeps_the_data_before_it() {
    let mut w = World::standard(1e-5, 3);
    w.moves = vec![1140.0];
    w.length = 3000.0;
    w.initial_offset = 1e-3;
    let ev = parse_events("t_s,label\n1140,B\n", Path::new("events.csv")).unwrap();
    let a = run(&w, &ev, &opts());
    let labels: Vec<&str> = a.segments.iter().map(|s| s.label.as_str()).collect();
    assert_eq!(labels, ["A", "B"]);
    assert_eq!(a.segments[0].start, 0.0);
    assert!(a.refused.is_empty(), "{:?}", a.refused);
    assert_unbiased(&a, "one move");
}

#[test]
fn an_events_file_written_by_record_is_read_as_it_is() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("events.csv");
    let w = World::standard(1e-5, 5);
    {
        let mut log = EventLog::open(&p).unwrap();
        for &m in &w.moves {
            log.mark(Seconds(m), "move").unwrap();
        }
    }
    let ev = spotlever::analysis::read_events(&p).unwrap();
    let a = run(&w, &ev, &opts());
    let labels: Vec<&str> = a.segments.iter().map(|s| s.label.as_str()).collect();
    assert_eq!(labels, ["A", "B", "A", "B", "A"]);
    assert_unbiased(&a, "record's events");
    // The old layout (a first row at the track's start naming the position) reads the same.
    let mut rows = vec![Event::new(0.0, "A")];
    rows.extend(World::events_at(&w.moves));
    let b = run(&w, &rows, &opts());
    assert_eq!(a.g.value, b.g.value);
}

/// `w` with a 300 s period sampled every 5 s (60 samples a period), five segments of three periods.
fn short_period(mut w: World) -> World {
    w.period = 300.0;
    w.dt = 5.0;
    w.moves = (1..5).map(|k| k as f64 * 900.0).collect();
    w.length = 4500.0;
    w
}

/// G with the events logged at `logged` against G with the true (mid-move) times used as they are.
fn relative_change(w: &World, logged: &[f64], o: &AnalysisOptions) -> (f64, Analysis) {
    let as_given = AnalysisOptions {
        refine_reach_periods: 0.0,
        ..opts()
    };
    let exact = run(w, &World::events_at(&w.true_moves()), &as_given);
    let a = run(w, &World::events_at(logged), o);
    (a.g.value / exact.g.value - 1.0, a)
}

#[test]
fn a_slow_move_logged_at_its_start_gives_the_exact_events_result() {
    // Masses swung over 30 s, each move logged when the swing began: a tenth of a 300 s period
    // sampled every 5 s, and a fifth of a 150 s period sampled every 3 s.
    for (period, dt) in [(300.0, 5.0), (150.0, 3.0)] {
        let mut w = short_period(World::standard(1e-5, 7));
        w.period = period;
        w.dt = dt;
        w.moves = (1..5).map(|k| k as f64 * 3.0 * period).collect();
        w.length = 15.0 * period;
        w.move_duration = 30.0;
        let logged = w.moves.clone();
        let (d, a) = relative_change(&w, &logged, &opts());
        let (d_raw, _) = relative_change(
            &w,
            &logged,
            &AnalysisOptions {
                settle_periods: 0.0,
                refine_reach_periods: 0.0,
                ..opts()
            },
        );
        eprintln!(
            "T {period} s: 30 s move logged at its start: G {:+.3} % (as logged, no settling: {:+.3} %)",
            100.0 * d,
            100.0 * d_raw
        );
        assert!(
            d.abs() < 2e-3,
            "T {period} s: G changed by {:.3} %",
            100.0 * d
        );
        // The refined times sit near the middle of each swing (within a twentieth of a period).
        for (m, t) in a.moves.iter().zip(w.true_moves()) {
            assert!((m - t).abs() < period / 20.0, "move at {m} s, true {t} s");
        }
    }
}

#[test]
fn moves_logged_early_give_the_exact_events_result() {
    let w = short_period(World::standard(1e-5, 9));
    let logged: Vec<f64> = w.moves.iter().map(|m| m - 20.0).collect();
    let (d, a) = relative_change(&w, &logged, &opts());
    let (d_raw, _) = relative_change(
        &w,
        &logged,
        &AnalysisOptions {
            settle_periods: 0.0,
            refine_reach_periods: 0.0,
            ..opts()
        },
    );
    eprintln!(
        "moves logged 20 s early: G {:+.3} % (as logged: {:+.3} %)",
        100.0 * d,
        100.0 * d_raw
    );
    assert!(d.abs() < 2e-3, "G changed by {:.3} %", 100.0 * d);
    assert!(a
        .warnings
        .iter()
        .any(|m| m.contains("events.csv, line 2") && m.contains("seen in the data")));
}

#[test]
fn bad_rows_are_named_by_file_and_line() {
    let p = Path::new("events.csv");
    let e = parse_events("t_s,label\n1500,B\n1400,A\n", p)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("events.csv, line 3") && e.contains("time order"),
        "{e}"
    );
    // A move after the track, a label that is no position, and two moves closer than a period.
    let w = World::standard(1e-5, 11);
    let text = "t_s,label\n1500,B\n3000,far side\n4500,A\n4700,B\n6000,A\n9000,B\n";
    let ev = parse_events(text, p).unwrap();
    let a = run(&w, &ev, &opts());
    let has = |needle: &[&str]| {
        a.warnings
            .iter()
            .any(|m| needle.iter().all(|n| m.contains(n)))
    };
    assert!(
        has(&["events.csv, line 3", "far side", "neither A nor B"]),
        "{:?}",
        a.warnings
    );
    assert!(
        has(&["events.csv, line 7", "after the last sample"]),
        "{:?}",
        a.warnings
    );
    assert!(
        has(&["events.csv, line 4", "already were"]),
        "{:?}",
        a.warnings
    );
    assert!(
        has(&["events.csv, lines 4 and 5", "less than a period"]),
        "{:?}",
        a.warnings
    );
    // Events that miss the track altogether: an error naming the file.
    let ev = parse_events("t_s,label\n0,A\n9000,B\n", p).unwrap();
    let e = analyze(
        &w.samples(&exact_setup()),
        &exact_setup(),
        Some(&ev),
        &opts(),
    )
    .unwrap_err();
    assert!(
        e.to_string().contains("events.csv") && e.to_string().contains("inside the track"),
        "{e}"
    );
}

#[test]
fn a_segment_too_short_to_fit_is_refused_by_name_and_g_still_follows() {
    // The masses moved to B and back to A within a minute at 1500 s: the segment between gives no
    // samples once the settling time is left out.
    let mut w = World::standard(1e-5, 13);
    w.moves = vec![1500.0, 1560.0, 3000.0, 4500.0, 6000.0];
    w.initial_offset = 1e-3;
    let ev = World::events_at(&w.moves);
    let a = run(&w, &ev, &opts());
    assert_eq!(a.refused.len(), 1, "{:?}", a.refused);
    let r = &a.refused[0];
    assert_eq!((r.index, r.label.as_str()), (2, "B"));
    assert!(
        r.reason.starts_with("segment 2 (B,") && r.reason.contains("refused"),
        "{}",
        r.reason
    );
    assert!(
        a.warnings
            .iter()
            .any(|m| m.contains("segments 3 to 6 only")),
        "{:?}",
        a.warnings
    );
    let screen = spotlever::analysis::Summary::new(&a, 0, false).to_string();
    assert!(screen.contains("refused: segment 2 (B,"), "{screen}");
    assert_unbiased(&a, "refused middle segment");
}
