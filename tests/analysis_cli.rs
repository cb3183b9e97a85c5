//! `spotlever analyze` end to end on a synthesized track file: outputs written, G recovered, and the
//! errors for a track without screen positions and for a bad setup file.

mod analysis_common;
mod support;

use analysis_common::{run, EXACT_SETUP};
use spotlever::lever::Lever;
use spotlever::spot::{SpotFix, SpotStatus};
use spotlever::track::{TrackRow, TrackWriter};
use spotlever::units::{PixelPoint, Radians, ScreenPoint, Seconds};
use std::path::Path;
use support::cli::{spotlever, Ran};

fn write_track(path: &Path, with_mm: bool) {
    let r = run(5, 3.0, 4.0, 2e-5, 1e-10, 5);
    let setup = analysis_common::exact_setup();
    let lever = Lever::from_setup(&setup);
    let mut w = TrackWriter::create(path, with_mm).unwrap();
    for (k, s) in r.samples.iter().enumerate() {
        // A lost-spot stretch: rows without a position.
        let lost = (1200..1260).contains(&k);
        let x_mm = lever.reading(Radians(s.theta)) * 1e3;
        let fix = SpotFix {
            position: (!lost).then_some(PixelPoint {
                x: x_mm * 10.0,
                y: 100.0,
            }),
            peak: 200.0,
            integral: 5000.0,
            width_px: 3.0,
            saturated_px: 0,
            snr: 40.0,
            status: if lost {
                SpotStatus::Lost
            } else {
                SpotStatus::Ok
            },
        };
        w.write(&TrackRow {
            frame: k as u64,
            t: Seconds(s.t),
            fix,
            screen: (!lost).then_some(ScreenPoint { x_mm, y_mm: 0.0 }),
        })
        .unwrap();
    }
}

/// `spotlever analyze TRACK --setup SETUP --out DIR` plus `extra`.
fn analyze(track: &Path, setup: &Path, out: &Path, extra: &[&str]) -> Ran {
    let args = [
        "analyze",
        track.to_str().unwrap(),
        "--setup",
        setup.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ];
    spotlever(args.iter().chain(extra))
}

/// `spotlever analyze TRACK --setup SETUP --out DIR`, expected to fail; returns its stderr.
fn analyze_fails(track: &Path, setup: &Path, out: &Path) -> String {
    analyze(track, setup, out, &[]).failed().to_owned()
}

#[test]
fn analyze_writes_all_outputs_and_recovers_g() {
    let dir = tempfile::tempdir().unwrap();
    let track = dir.path().join("track.csv");
    let setup = dir.path().join("setup.toml");
    let out = dir.path().join("out");
    write_track(&track, true);
    std::fs::write(&setup, EXACT_SETUP).unwrap();
    let o = analyze(&track, &setup, &out, &["--draws", "100000"]);
    let stdout = &o.stdout;
    eprintln!("{stdout}{}", o.stderr);
    assert!(o.ok());
    // One screen: at most 40 lines of at most 160 characters.
    assert!(
        stdout.lines().count() <= 40,
        "{} lines",
        stdout.lines().count()
    );
    for f in ["angle.csv", "segments.csv", "result.json", "report.svg"] {
        assert!(out.join(f).exists(), "{f} missing");
    }
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("result.json")).unwrap()).unwrap();
    for key in [
        "G",
        "period_s",
        "kappa_N_m_per_rad",
        "theta_rad",
        "beta",
        "budget",
        "segments",
    ] {
        assert!(v.get(key).is_some(), "result.json lacks {key}");
    }
    assert_eq!(v["G"]["unit"], "m^3 kg^-1 s^-2");
    let g = v["G"]["value"].as_f64().unwrap();
    let u = v["G"]["u"].as_f64().unwrap();
    // Simulated with CODATA 2018 G (6.67430e-11); the setup is exact, so u is statistical. Four
    // standard uncertainties: a failure here is a real error, not bad luck (6e-5 chance).
    assert!((g - 6.674_30e-11).abs() < 4.0 * u, "G {g} ± {u}");
    assert!(v["relative_difference_from_codata_2018"].as_f64().is_some());
    // Set SPOTLEVER_KEEP_REPORT=DIR to keep the outputs for a look.
    if let Ok(keep) = std::env::var("SPOTLEVER_KEEP_REPORT") {
        for f in ["angle.csv", "segments.csv", "result.json", "report.svg"] {
            let _ = std::fs::copy(out.join(f), Path::new(&keep).join(f));
        }
    }
    let svg = std::fs::read_to_string(out.join("report.svg")).unwrap();
    assert!(
        svg.contains("<text") && svg.contains("theta (mrad)"),
        "SVG without text"
    );
    let seg = std::fs::read_to_string(out.join("segments.csv")).unwrap();
    assert_eq!(seg.lines().count(), 6, "{seg}");
    let angle = std::fs::read_to_string(out.join("angle.csv")).unwrap();
    assert!(angle.starts_with("t_s,theta_rad,segment\n"));
}

#[test]
fn track_without_screen_positions_says_to_calibrate() {
    let dir = tempfile::tempdir().unwrap();
    let track = dir.path().join("track.csv");
    let setup = dir.path().join("setup.toml");
    write_track(&track, false);
    std::fs::write(&setup, EXACT_SETUP).unwrap();
    let err = analyze_fails(&track, &setup, &dir.path().join("o"));
    assert!(err.contains("x_mm") && err.contains("--calib"), "{err}");
}

#[test]
fn setup_with_a_missing_or_mistyped_key_is_refused_by_name() {
    let dir = tempfile::tempdir().unwrap();
    let track = dir.path().join("track.csv");
    write_track(&track, true);
    for (bad, expect) in [
        (EXACT_SETUP.replace("arm = ", "arn = "), "arn"),
        (
            EXACT_SETUP.replace("separation = \"46.5 ± 0 mm\"\n", ""),
            "separation",
        ),
    ] {
        let setup = dir.path().join("setup.toml");
        std::fs::write(&setup, bad).unwrap();
        let err = analyze_fails(&track, &setup, &dir.path().join("o"));
        assert!(err.contains(expect) && err.contains("setup.toml"), "{err}");
    }
}
