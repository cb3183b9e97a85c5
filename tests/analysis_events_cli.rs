//! `spotlever analyze` with an events file as `record` writes it (one `move` row per key press), run
//! as the README's step 4 shows it, from a track in which some rows are ambiguous or saturated.
//!
//! The run comes from `analysis_world` (an RK4 integration written for the tests), made with
//! CODATA 2018 G = 6.67430e-11 m^3 kg^-1 s^-2.

mod analysis_common;
mod analysis_world;
mod support;

use analysis_common::EXACT_SETUP;
use analysis_world::World;
use spotlever::lever::Lever;
use spotlever::physics::G_CODATA_2018;
use spotlever::record::events::EventLog;
use spotlever::spot::{SpotFix, SpotStatus};
use spotlever::track::{TrackRow, TrackWriter};
use spotlever::units::{PixelPoint, Radians, ScreenPoint, Seconds};
use std::path::Path;
use support::cli::{bin, run};

/// A track of `w`: every 50th row saturated (kept), every 70th ambiguous with its position 40 mm
/// off (a reflection taken for the spot: it must not be used).
fn write_track(path: &Path, w: &World) -> usize {
    let setup = analysis_common::exact_setup();
    let lever = Lever::from_setup(&setup);
    let mut tw = TrackWriter::create(path, true).unwrap();
    let mut ambiguous = 0;
    for (k, s) in w.samples(&setup).iter().enumerate() {
        let status = if k % 70 == 0 {
            ambiguous += 1;
            SpotStatus::Ambiguous
        } else if k % 50 == 0 {
            SpotStatus::Saturated
        } else {
            SpotStatus::Ok
        };
        let off = if status == SpotStatus::Ambiguous {
            40.0
        } else {
            0.0
        };
        let x_mm = lever.reading(Radians(s.theta)) * 1e3 + off;
        let fix = SpotFix {
            position: Some(PixelPoint {
                x: x_mm * 10.0,
                y: 100.0,
            }),
            peak: 200.0,
            integral: 5000.0,
            width_px: 3.0,
            saturated_px: 0,
            snr: 40.0,
            status,
        };
        tw.write(&TrackRow {
            frame: k as u64,
            t: Seconds(s.t),
            fix,
            screen: Some(ScreenPoint { x_mm, y_mm: 0.0 }),
        })
        .unwrap();
    }
    ambiguous
}

#[test]
fn the_readme_steps_work_with_an_events_file_from_record() {
    let dir = tempfile::tempdir().unwrap();
    let w = World::standard(1e-5, 31);
    std::fs::create_dir(dir.path().join("run1")).unwrap();
    let ambiguous = write_track(&dir.path().join("run1/track.csv"), &w);
    std::fs::write(dir.path().join("setup.toml"), EXACT_SETUP).unwrap();
    {
        let mut log = EventLog::open(&dir.path().join("run1/events.csv")).unwrap();
        for &m in &w.moves {
            log.mark(Seconds(m), "move").unwrap();
        }
    }
    // Step 4 of the README, verbatim.
    let o = run(bin().current_dir(dir.path()).args([
        "analyze",
        "run1/track.csv",
        "--setup",
        "setup.toml",
        "--events",
        "run1/events.csv",
        "--out",
        "results",
    ]));
    o.assert_ok();
    let text = std::fs::read_to_string(dir.path().join("results/result.json")).unwrap();
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    let labels: Vec<&str> = v["segments"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["label"].as_str().unwrap())
        .collect();
    assert_eq!(labels, ["A", "B", "A", "B", "A"]);
    // The ambiguous rows are gaps, not stray samples, and the saturated ones are used.
    assert_eq!(v["outliers"].as_u64(), Some(0), "{}", o.stdout);
    let used = v["samples_used"].as_u64().unwrap() as usize;
    assert_eq!(
        used,
        w.samples(&analysis_common::exact_setup()).len() - ambiguous
    );
    let (g, u) = (
        v["G"]["value"].as_f64().unwrap(),
        v["G"]["u"].as_f64().unwrap(),
    );
    assert!((g - G_CODATA_2018).abs() < 4.0 * u, "G = {g} ± {u}");
    assert_eq!(v["segments_refused"].as_array().map(Vec::len), Some(0));
}

#[test]
fn an_out_of_range_settling_time_is_refused_by_name() {
    let o = run(bin().args([
        "analyze", "t.csv", "--setup", "s.toml", "--out", "o", "--settle", "3",
    ]));
    assert!(!o.ok());
    assert!(o.stderr.contains("--settle 3"), "{}", o.stderr);
}
