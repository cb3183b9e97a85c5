//! SIGINT closes a replayed run cleanly: a complete track, the summary on standard output and the
//! session's end in run.toml.

mod support;

use spotlever::record::run_dir::read_meta;
use spotlever::track::read_track;
use std::time::Duration;
use support::cli::Ran;
use support::record::*;

#[test]
fn sigint_closes_with_summary() {
    let tmp = tempfile::tempdir().unwrap();
    let seq = tmp.path().join("seq");
    write_sequence(&seq, 100, 20.0);
    let run = run_dir(tmp.path());
    let child = spawn_record(&seq, &run, &["--speed", "1", "--status-every", "0.5"]);
    wait_for_lines(&run.join("track.csv"), 20, Duration::from_secs(30));
    // SAFETY: plain kill(2) on our own child's pid.
    let rc = unsafe { libc::kill(child.id() as libc::pid_t, libc::SIGINT) };
    assert_eq!(rc, 0);
    let out = Ran::from(child.wait_with_output().unwrap());
    let (stdout, stderr) = (&out.stdout, &out.stderr);
    assert!(out.ok(), "exit {:?}\n{stdout}\n{stderr}", out.status);
    assert!(stdout.contains("(SIGINT)"), "{stdout}");
    assert!(stdout.contains("spot found"), "{stdout}");
    // Periodic status lines when not on a terminal.
    assert!(
        stdout.lines().any(|l| l.contains("fps, dropped")),
        "{stdout}"
    );

    let track = read_track(&run.join("track.csv")).unwrap();
    assert!(!track.truncated_tail);
    let n = track.rows.len();
    assert!((19..100).contains(&n), "{n} rows");
    assert!(stdout.contains(&format!("frames      {n} ")), "{stdout}");
    let meta = read_meta(&run.join("run.toml")).unwrap();
    let s = &meta.sessions[0];
    assert_eq!(s.stopped_by.as_deref(), Some("SIGINT"));
    assert_eq!(s.frames, Some(n as u64));
    assert!(s.ended_utc.is_some());
    assert_eq!(s.source_kind, "replay");
    assert_eq!((s.width, s.height), (W, H));
    assert!(meta.tool.starts_with("spotlever "));
}
