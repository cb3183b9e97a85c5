//! A replayed run killed with SIGKILL keeps every frame up to the last second before the kill, and its
//! evidence frames reprocess with the run's times.

mod support;

use spotlever::record::run_dir::read_meta;
use spotlever::source::{self, Delivery, OpenOptions};
use spotlever::track::read_track;
use std::time::{Duration, SystemTime, UNIX_EPOCH};
use support::record::*;

#[test]
fn sigkill_loses_at_most_the_last_second() {
    let tmp = tempfile::tempdir().unwrap();
    let seq = tmp.path().join("seq");
    let fps = 20.0;
    // 10 s of frames at the recorded pace.
    let times = write_sequence(&seq, 200, fps);
    let run = run_dir(tmp.path());
    let mut child = spawn_record(&seq, &run, &["--speed", "1", "--keep-every", "10"]);
    wait_for_lines(&run.join("track.csv"), 10, Duration::from_secs(30));
    std::thread::sleep(Duration::from_secs(5));
    child.kill().unwrap(); // SIGKILL
    let killed_at = SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .unwrap()
        .as_secs_f64();
    let status = child.wait().unwrap();
    assert!(!status.success(), "the recorder was killed, not finished");

    let meta = read_meta(&run.join("run.toml")).unwrap();
    let started = meta.sessions[0].started_unix_s;
    // Source time reached at the kill, on the recorder's own pace clock (1x).
    let t_kill = killed_at - started;
    assert!(t_kill > 3.0 && t_kill < 10.0, "t_kill {t_kill}");

    let track = read_track(&run.join("track.csv")).unwrap();
    let rows = &track.rows;
    // Every frame, in order, with the source's times.
    for (i, r) in rows.iter().enumerate() {
        assert_eq!(r.frame, i as u64);
        assert!(
            (r.t.0 - times[i]).abs() < 1e-6,
            "row {i}: {} vs {}",
            r.t.0,
            times[i]
        );
    }
    let last_t = rows.last().unwrap().t.0;
    let must_have = times.iter().filter(|&&t| t <= t_kill - 1.0).count();
    assert!(
        rows.len() >= must_have,
        "{} rows, but {must_have} frames were due more than 1 s before the kill (t_kill {t_kill:.3})",
        rows.len()
    );
    // Paced replay: nothing from the future (50 ms for the decode of the first frame and scheduling).
    assert!(
        last_t <= t_kill + 0.05,
        "last row {last_t} after kill {t_kill}"
    );

    // The same tracker as 'track': positions agree with the truth. For a Gaussian spot of amplitude
    // A and white noise sigma the Cramer-Rao bound on x is sigma/A*sqrt(2/pi) (continuous-pixel
    // approximation, from memory) = 0.011 px here; 0.15 px is over 13 times that.
    for r in rows {
        let p = r.fix.position.expect("spot found");
        let tr = truth(r.frame as usize, fps);
        assert!(
            (p.x - tr.x).abs() < 0.15 && (p.y - tr.y).abs() < 0.15,
            "frame {}: {p:?} vs {tr:?}",
            r.frame
        );
    }

    // Kept frames form an image sequence with the run's times.
    let mut kept = source::open(&run.join("frames"), &OpenOptions::default()).unwrap();
    // A kept frame may be on disk while its track row was still in the writer's buffer at the kill:
    // such frames are compared with nothing, and there are at most a second's worth of them.
    let mut n = 0;
    let mut ahead_of_track = 0;
    while let Some(d) = kept.next_delivery() {
        let Delivery::Frame(f) = d.unwrap() else {
            panic!("unreadable kept frame")
        };
        match rows.get(n * 10) {
            Some(row) => assert!((f.t.0 - row.t.0).abs() < 1e-6),
            None => ahead_of_track += 1,
        }
        n += 1;
    }
    assert!(n >= rows.len() / 10, "{n} kept of {}", rows.len());
    assert!(
        (ahead_of_track as f64) <= (fps / 10.0_f64).ceil() + 1.0,
        "{ahead_of_track} kept frames are more than a second ahead of the track"
    );
}
