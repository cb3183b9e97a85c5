//! An existing run folder is never overwritten: without a flag the recorder refuses and names the
//! flags, `--append` continues frame numbers and times after the last row, `--force` replaces it.

mod support;

use spotlever::record::run_dir::read_meta;
use spotlever::source::{self, Delivery, OpenOptions};
use spotlever::track::read_track;
use support::record::*;

#[test]
fn append_continues_times_and_force_replaces() {
    let tmp = tempfile::tempdir().unwrap();
    let seq = tmp.path().join("seq");
    let fps = 10.0;
    let times = write_sequence(&seq, 30, fps);
    let run = run_dir(tmp.path());
    let keep = ["--speed", "max", "--keep-every", "7"];
    let out = record_to_end(&seq, &run, &keep);
    out.assert_ok();
    assert!(out.stdout.contains("end of source"));

    let refused = record_to_end(&seq, &run, &keep);
    let msg = refused.failed();
    assert!(msg.contains("--append") && msg.contains("--force"), "{msg}");

    let mut args = keep.to_vec();
    args.push("--append");
    let out = record_to_end(&seq, &run, &args);
    out.assert_ok();
    assert!(out.stdout.contains("continued"));

    let rows = read_track(&run.join("track.csv")).unwrap().rows;
    assert_eq!(rows.len(), 60);
    let step = times[1] - times[0];
    for (i, r) in rows.iter().enumerate() {
        assert_eq!(r.frame, i as u64);
        let want = if i < 30 {
            times[i]
        } else {
            // The second session starts one frame interval after the first one's last row.
            times[29] + step + times[i - 30]
        };
        assert!((r.t.0 - want).abs() < 1e-6, "row {i}: {} vs {want}", r.t.0);
    }
    let meta = read_meta(&run.join("run.toml")).unwrap();
    assert_eq!(meta.sessions.len(), 2);
    assert_eq!(meta.sessions[1].first_frame, 30);
    assert!((meta.sessions[1].t_offset_s - (times[29] + step)).abs() < 1e-9);
    let text = std::fs::read_to_string(run.join("track.csv")).unwrap();
    assert!(text.contains("# session 2 started"), "{text}");

    // Kept frames of both sessions read back as one sequence with increasing times.
    let mut kept = source::open(&run.join("frames"), &OpenOptions::default()).unwrap();
    let mut kt = Vec::new();
    while let Some(d) = kept.next_delivery() {
        if let Delivery::Frame(f) = d.unwrap() {
            kt.push(f.t.0);
        }
    }
    let expect: Vec<f64> = rows
        .iter()
        .filter(|r| r.frame % 7 == 0)
        .map(|r| r.t.0)
        .collect();
    assert_eq!(kt.len(), expect.len());
    for (a, b) in kt.iter().zip(&expect) {
        assert!((a - b).abs() < 1e-6);
    }

    let mut args = keep.to_vec();
    args.push("--force");
    let out = record_to_end(&seq, &run, &args);
    out.assert_ok();
    assert_eq!(read_track(&run.join("track.csv")).unwrap().rows.len(), 30);
    assert_eq!(read_meta(&run.join("run.toml")).unwrap().sessions.len(), 1);
}

#[test]
fn bad_options_are_explained() {
    let tmp = tempfile::tempdir().unwrap();
    let seq = tmp.path().join("seq");
    write_sequence(&seq, 3, 10.0);
    let run = run_dir(tmp.path());
    let out = record_to_end(&seq, &run, &["--speed", "fast"]);
    assert!(out.failed().contains("'max'"));
    let out = record_to_end(&tmp.path().join("nowhere"), &run, &[]);
    assert!(out.failed().contains("nowhere"));
    // Nothing was created for a run that could not start.
    assert!(!run.exists());
    let out = record_to_end(&seq, &run, &["--append"]);
    assert!(out.stderr.contains("drop --append"));
}
