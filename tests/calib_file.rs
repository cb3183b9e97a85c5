//! The calibration file: round trip, version and size checks, and clear errors naming file and line.

use nalgebra::Matrix3;
use spotlever::calib::{CalibError, Calibration};
use spotlever::units::{PixelPoint, ScreenPoint};
use std::path::Path;

fn sample() -> Calibration {
    let h = Matrix3::new(
        0.21, 0.013, -120.0, -0.008, 0.2, -70.0, 1.1e-5, -2.3e-5, 1.0,
    );
    Calibration {
        image_width: 1280,
        image_height: 720,
        h,
        h_inv: h.try_inverse().unwrap(),
        rms_px: 0.123,
        rms_mm: 0.0256,
        points: 48,
        source_image: "screen.png".into(),
        created: "2026-12-01T23:50:00Z".into(),
        notes: "taped grid, 10 mm\nsecond line".into(),
    }
}

#[test]
fn save_then_load_gives_the_same_calibration() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("c.toml");
    let c = sample();
    c.save(&p).unwrap();
    let back = Calibration::load(&p).unwrap();
    // Floats are written in shortest round-trip form, so the matrices come back bit for bit.
    assert_eq!(back, c);
    let s = back.to_screen(PixelPoint { x: 600.0, y: 300.0 });
    let q = back.to_image(s);
    assert!((q.x - 600.0).abs() < 1e-9 && (q.y - 300.0).abs() < 1e-9);
    let t = back.to_image(ScreenPoint {
        x_mm: s.x_mm,
        y_mm: s.y_mm,
    });
    assert!((t.x - 600.0).abs() < 1e-9);
}

#[test]
fn wrong_image_size_names_both_sizes_and_says_recalibrate() {
    let c = sample();
    assert!(c.check_image_size(1280, 720).is_ok());
    let e = c.check_image_size(640, 480).unwrap_err();
    let m = e.to_string();
    assert!(matches!(e, CalibError::ImageSize { .. }));
    assert!(
        m.contains("1280x720") && m.contains("640x480") && m.contains("recalibrate"),
        "{m}"
    );
}

#[test]
fn newer_version_is_refused_with_its_number() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("v.toml");
    let text = sample().to_toml().replace("version = 1", "version = 7");
    std::fs::write(&p, text).unwrap();
    let e = Calibration::load(&p).unwrap_err();
    assert!(matches!(e, CalibError::Version { found: 7, .. }), "{e}");
    assert!(e.to_string().contains("v.toml"));
}

#[test]
fn syntax_error_names_file_and_line() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("bad.toml");
    let text = sample().to_toml();
    let bad_line = text.lines().position(|l| l.starts_with("rms_px")).unwrap() + 1;
    let text = text.replace("rms_px = 0.123", "rms_px = zero point one");
    std::fs::write(&p, text).unwrap();
    let e = Calibration::load(&p).unwrap_err();
    match &e {
        CalibError::Syntax { line, .. } => assert_eq!(*line, bad_line, "{e}"),
        other => panic!("expected a syntax error, got {other}"),
    }
    assert!(
        e.to_string().contains(&format!("bad.toml:{bad_line}")),
        "{e}"
    );
}

#[test]
fn mismatched_inverse_and_non_calibration_files_are_refused() {
    let mut c = sample();
    c.h_inv[(0, 0)] *= 1.01;
    let e = Calibration::from_toml(&c.to_toml(), Path::new("x.toml")).unwrap_err();
    assert!(e.to_string().contains("not inverse"), "{e}");
    let e = Calibration::from_toml("width = 3\n", Path::new("y.toml")).unwrap_err();
    assert!(e.to_string().contains("not a screen calibration"), "{e}");
}

#[test]
fn missing_file_and_unwritable_path_are_clear_errors() {
    let e = Calibration::load(Path::new("/nonexistent/dir/c.toml")).unwrap_err();
    assert!(e.to_string().contains("/nonexistent/dir/c.toml"), "{e}");
    let e = sample()
        .save(Path::new("/nonexistent/dir/c.toml"))
        .unwrap_err();
    assert!(matches!(e, CalibError::Write { .. }));
    assert!(
        e.to_string().contains("/nonexistent/dir/c.toml") && e.to_string().contains("writable")
    );
}
