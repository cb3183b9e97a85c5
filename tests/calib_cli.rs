//! The `calibrate` command end to end: a point-pair calibration written and read back, and bad input
//! giving a clear message and a non-zero exit.

mod support;

use spotlever::calib::Calibration;
use spotlever::units::PixelPoint;
use std::path::Path;
use support::cli::spotlever;

fn write_image(path: &Path, w: u32, h: u32) {
    image::GrayImage::from_pixel(w, h, image::Luma([200u8]))
        .save(path)
        .unwrap();
}

/// Pairs from an exact map x_mm = (x_px - 100) / 4, y_mm = (200 - y_px) / 4.
fn pairs_csv(n: usize) -> String {
    let mut s = String::from("x_px,y_px,x_mm,y_mm\n");
    for k in 0..n {
        let (x, y) = (40.0 + 37.0 * (k % 4) as f64, 30.0 + 41.0 * (k / 4) as f64);
        s.push_str(&format!(
            "{x},{y},{},{}\n",
            (x - 100.0) / 4.0,
            (200.0 - y) / 4.0
        ));
    }
    s
}

/// `spotlever calibrate ARGS...`: whether it succeeded, its standard output and its standard error.
fn run(args: &[&str]) -> (bool, String, String) {
    let r = spotlever(std::iter::once("calibrate").chain(args.iter().copied()));
    (r.ok(), r.stdout, r.stderr)
}

#[test]
fn point_pairs_make_a_calibration_file_and_overlay() {
    let dir = tempfile::tempdir().unwrap();
    let img = dir.path().join("screen.png");
    write_image(&img, 240, 200);
    let csv = dir.path().join("pairs.csv");
    std::fs::write(&csv, pairs_csv(12)).unwrap();
    let out = dir.path().join("c.toml");
    let ov = dir.path().join("o.png");
    let (ok, stdout, stderr) = run(&[
        img.to_str().unwrap(),
        "--points",
        csv.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--overlay",
        ov.to_str().unwrap(),
    ]);
    assert!(ok, "{stderr}");
    assert!(stdout.contains("RMS") && stdout.contains("px/mm") && stdout.contains("points used"));
    let c = Calibration::load(&out).unwrap();
    assert_eq!((c.image_width, c.image_height, c.points), (240, 200, 12));
    let s = c.to_screen(PixelPoint { x: 180.0, y: 120.0 });
    assert!((s.x_mm - 20.0).abs() < 1e-9 && (s.y_mm - 20.0).abs() < 1e-9);
    assert!((c.px_per_mm_at_centre() - 4.0).abs() < 1e-6);
    assert_eq!(image::image_dimensions(&ov).unwrap(), (240, 200));
}

#[test]
fn bad_input_fails_with_a_clear_message() {
    let dir = tempfile::tempdir().unwrap();
    let img = dir.path().join("screen.png");
    write_image(&img, 240, 200);
    let csv = dir.path().join("pairs.csv");
    std::fs::write(&csv, pairs_csv(8)).unwrap();
    let few = dir.path().join("few.csv");
    std::fs::write(&few, pairs_csv(3)).unwrap();
    let out = dir.path().join("c.toml");

    let (ok, _, e) = run(&[
        img.to_str().unwrap(),
        "--points",
        csv.to_str().unwrap(),
        "--out",
        "/nonexistent-dir/c.toml",
    ]);
    assert!(
        !ok && e.contains("/nonexistent-dir/c.toml") && e.contains("writable"),
        "{e}"
    );

    let (ok, _, e) = run(&[
        img.to_str().unwrap(),
        "--points",
        few.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(
        !ok && e.contains("only 3 point pairs") && e.contains("at least 4"),
        "{e}"
    );

    let (ok, _, e) = run(&[
        img.to_str().unwrap(),
        "--grid",
        "10",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(!ok && e.contains("no grid found in screen.png"), "{e}");
    assert!(!out.exists(), "nothing is written on failure");
}
