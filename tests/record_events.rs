//! Events marked while a run records (here typed on standard input, as a script or a second program
//! would) land in events.csv as `t_s,label` rows on the track's clock.

mod support;

use spotlever::track::read_track;
use std::io::Write;
use std::time::Duration;
use support::cli::Ran;
use support::record::*;

#[test]
fn marked_events_are_written_and_quit_closes() {
    let tmp = tempfile::tempdir().unwrap();
    let seq = tmp.path().join("seq");
    write_sequence(&seq, 100, 20.0);
    let run = run_dir(tmp.path());
    let mut child = spawn_record(&seq, &run, &["--speed", "1"]);
    let mut stdin = child.stdin.take().unwrap();
    wait_for_lines(&run.join("track.csv"), 10, Duration::from_secs(30));
    writeln!(stdin, "m").unwrap();
    std::thread::sleep(Duration::from_millis(500));
    writeln!(stdin, "mark masses to far side").unwrap();
    writeln!(stdin, "hop").unwrap();
    std::thread::sleep(Duration::from_millis(300));
    writeln!(stdin, "q").unwrap();
    let out = Ran::from(child.wait_with_output().unwrap());
    let (stdout, stderr) = (&out.stdout, &out.stderr);
    assert!(out.ok(), "{stdout}\n{stderr}");
    assert!(stdout.contains("(quit command)"), "{stdout}");
    assert!(stdout.contains("events      2 "), "{stdout}");
    assert!(stderr.contains("not a command: \"hop\""), "{stderr}");

    let rows = read_track(&run.join("track.csv")).unwrap().rows;
    let (t0, t1) = (rows[0].t.0, rows.last().unwrap().t.0);
    let text = std::fs::read_to_string(run.join("events.csv")).unwrap();
    let mut lines = text.lines();
    assert_eq!(lines.next(), Some("t_s,label"));
    let ev: Vec<(f64, String)> = lines
        .map(|l| {
            let (t, label) = l.split_once(',').unwrap();
            (t.parse().unwrap(), label.to_string())
        })
        .collect();
    assert_eq!(ev.len(), 2, "{text}");
    assert_eq!(ev[0].1, "move");
    assert_eq!(ev[1].1, "masses to far side");
    // On the track's clock, in order, about 0.5 s apart at 1x (scheduling allowance 0.3 s).
    assert!(ev[0].0 >= t0 && ev[1].0 <= t1 + 0.1, "{ev:?} vs {t0}..{t1}");
    let gap = ev[1].0 - ev[0].0;
    assert!((gap - 0.5).abs() < 0.3, "{gap}");

    // The analyzer's events reader (what `analyze --events` uses) reads the same events back.
    let back = spotlever::analysis::read_events(&run.join("events.csv")).unwrap();
    assert_eq!(back.len(), 2);
    for (b, (t, label)) in back.iter().zip(&ev) {
        assert!(
            (b.t - t).abs() < 1e-9 && &b.label == label,
            "{b:?} vs {t} {label}"
        );
    }
}
