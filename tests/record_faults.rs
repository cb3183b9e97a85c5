//! A source that stops delivering (a camera unplugged, a read error) is reopened until frames come
//! back; the gap is marked in the track and the run goes on with continuous frame numbers. Also: what
//! a build or machine without a camera says.

mod support;

use spotlever::frame::{Channel, Frame, Plane};
use spotlever::record::feed::{OnFault, Opener};
use spotlever::record::input::Controls;
use spotlever::record::run_dir::Existing;
use spotlever::record::session::{record, Display, SessionConfig, StoppedBy};
use spotlever::source::{Delivery, FrameSource, SourceError, SourceInfo};
use spotlever::spot::SpotConfig;
use spotlever::synth::{render_flat_spot, FlatSpot, Sensor};
use spotlever::track::read_track;
use spotlever::units::{PixelPoint, Seconds};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};
use support::cli::{bin, run, spotlever};
use support::record::*;

/// A camera stand-in: `frames` frames on the shared clock, then a read error (or, with `None`, for
/// ever).
struct Flaky {
    info: SourceInfo,
    plane: Plane,
    clock: Instant,
    left: Option<u32>,
    next: u64,
}

impl FrameSource for Flaky {
    fn info(&self) -> &SourceInfo {
        &self.info
    }
    fn next_delivery(&mut self) -> Option<Result<Delivery, SourceError>> {
        if let Some(n) = &mut self.left {
            if *n == 0 {
                return Some(Err(SourceError::Decode {
                    origin: "test camera".into(),
                    message: "read failed: device unplugged".into(),
                }));
            }
            *n -= 1;
        }
        std::thread::sleep(Duration::from_millis(10));
        let index = self.next;
        self.next += 1;
        Some(Ok(Delivery::Frame(Frame {
            index,
            t: Seconds(self.clock.elapsed().as_secs_f64()),
            plane: self.plane.clone(),
            origin: format!("frame {index}"),
        })))
    }
}

#[test]
fn a_stopped_source_is_retried_and_the_gap_marked() {
    let plane = render_flat_spot(
        &FlatSpot {
            width: 64,
            height: 48,
            centre: PixelPoint { x: 30.2, y: 20.7 },
            peak_dn: 150.0,
            background_dn: 20.0,
            sigma_px: 2.0,
            sensor: Sensor::default(),
        },
        7,
    )
    .unwrap();
    let clock = Instant::now();
    // Opening 1 gives 10 frames then fails; opening 2 fails (still unplugged); opening 3 delivers.
    let opened = Arc::new(Mutex::new(0u32));
    let o = Arc::clone(&opened);
    let opener: Opener = Box::new(move || {
        let mut k = o.lock().unwrap();
        *k += 1;
        let left = match *k {
            1 => Some(10),
            2 => {
                return Err(SourceError::Invalid {
                    path: "test camera".into(),
                    message: "not connected".into(),
                })
            }
            _ => None,
        };
        Ok(Box::new(Flaky {
            info: SourceInfo {
                description: "test camera".into(),
                width: 64,
                height: 48,
                expected_frames: None,
                crop: None,
            },
            plane: plane.clone(),
            clock,
            left,
            next: 0,
        }) as Box<dyn FrameSource>)
    });
    let tmp = tempfile::tempdir().unwrap();
    let run = run_dir(tmp.path());
    let summary = record(
        SessionConfig {
            out: run.clone(),
            existing: Existing::Refuse,
            source_kind: "camera".into(),
            source_name: "test camera".into(),
            fps_requested: None,
            frame_interval_s: None,
            channel: Channel::Luma,
            calibration: None,
            spot: SpotConfig::default(),
            keep_every: 0,
            display: Display::Silent,
            controls: Controls::Nothing,
            duration_s: Some(1.0),
            on_fault: OnFault::Retry {
                every: Duration::from_millis(100),
            },
            stall_after: Duration::from_secs(5),
            run_per_wall: 1.0,
            clock_times: true,
        },
        opener,
    )
    .unwrap();
    assert_eq!(summary.stopped_by, StoppedBy::Duration);
    assert_eq!(summary.gaps, 1);
    assert!(*opened.lock().unwrap() >= 3);

    let text = std::fs::read_to_string(run.join("track.csv")).unwrap();
    let gap_start = text
        .lines()
        .position(|l| l.starts_with("# gap after t_s=") && l.contains("device unplugged"))
        .expect("gap start marked");
    let gap_end = text
        .lines()
        .position(|l| l.starts_with("# gap ended"))
        .expect("gap end marked");
    // Header, ten rows, then the gap.
    assert_eq!(gap_start, 11, "{text}");
    assert_eq!(gap_end, 12, "{text}");
    let rows = read_track(&run.join("track.csv")).unwrap().rows;
    assert_eq!(rows.len() as u64, summary.rows);
    for (i, r) in rows.iter().enumerate() {
        assert_eq!(r.frame, i as u64, "frame numbers go on across the gap");
        assert!(r.fix.position.is_some());
    }
    // The retries took at least one retry interval of real time, and the times show it.
    let jump = rows[10].t.0 - rows[9].t.0;
    assert!(jump >= 0.1, "{jump}");
    assert!(rows.windows(2).all(|w| w[1].t.0 > w[0].t.0));
}

#[test]
fn no_camera_is_said_plainly() {
    let have_video = std::fs::read_dir("/dev")
        .map(|d| {
            d.flatten()
                .any(|e| e.file_name().to_string_lossy().starts_with("video"))
        })
        .unwrap_or(false);
    let out = spotlever(["record", "--list-cameras"]);
    if cfg!(feature = "camera") {
        if have_video {
            eprintln!("SKIP no_camera_is_said_plainly: this machine has a /dev/video* device");
            return;
        }
        let msg = out.failed();
        assert!(msg.contains("no camera found"), "{msg}");
    } else {
        let msg = out.failed();
        assert!(msg.contains("--features camera"), "{msg}");
        let tmp = tempfile::tempdir().unwrap();
        let out = run(bin()
            .args(["record", "--camera", "0", "--out"])
            .arg(tmp.path().join("r")));
        assert!(out.failed().contains("no camera support"));
    }
}
