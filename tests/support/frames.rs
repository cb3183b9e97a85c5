//! Rendered test frames with known spot centres for the source, video and track tests, written as
//! PNG sequences, and reading every frame of a source back.

use spotlever::synth::{render_flat_spot, FlatSpot, Sensor};
use spotlever::units::PixelPoint;
use std::path::Path;

/// A synthesizer frame: Gaussian spot sigma 2.5 px, peak 180 DN over 40 DN, noise 2 DN, 8-bit.
pub fn render_gray(w: usize, h: usize, cx: f64, cy: f64, seed: u64) -> Vec<u8> {
    let spot = FlatSpot {
        width: w,
        height: h,
        centre: PixelPoint { x: cx, y: cy },
        peak_dn: 180.0,
        background_dn: 40.0,
        sigma_px: 2.5,
        sensor: Sensor::default(),
    };
    let plane = render_flat_spot(&spot, seed).expect("valid test spot");
    plane.values().map(|v| v.min(255) as u8).collect()
}

/// Spot centre of test frame `i` of a slow Lissajous path inside a `w`x`h` image.
pub fn path_centre(i: usize, w: usize, h: usize) -> (f64, f64) {
    let s = i as f64;
    (
        w as f64 * (0.5 + 0.25 * (0.21 * s).sin()) + 0.137 * s.cos(),
        h as f64 * (0.5 + 0.2 * (0.13 * s + 0.4).cos()),
    )
}

/// Write `n` gray PNG frames `img0.png ... img{n-1}.png` (natural order differs from text order) and
/// return their spot centres.
pub fn write_png_frames(dir: &Path, n: usize, w: usize, h: usize) -> Vec<(f64, f64)> {
    std::fs::create_dir_all(dir).expect("create frame folder");
    (0..n)
        .map(|i| {
            let (cx, cy) = path_centre(i, w, h);
            let px = render_gray(w, h, cx, cy, 1000 + i as u64);
            image::GrayImage::from_raw(w as u32, h as u32, px)
                .expect("size")
                .save(dir.join(format!("img{i}.png")))
                .expect("save png");
            (cx, cy)
        })
        .collect()
}

/// Write a `times.csv` for the frames in `dir`, one per `1/fps` s.
pub fn write_times(dir: &Path, n: usize, fps: f64) {
    let mut s = String::from("file,t_s\n");
    for i in 0..n {
        s.push_str(&format!("img{i}.png,{}\n", i as f64 / fps));
    }
    std::fs::write(dir.join("times.csv"), s).expect("write times");
}

/// The spot position the project's tracker reports for each plane, in order (fresh tracker per run).
pub fn track_positions(planes: &[&spotlever::frame::Plane]) -> Vec<(f64, f64)> {
    let mut t = spotlever::spot::Tracker::new(spotlever::spot::SpotConfig::default());
    planes
        .iter()
        .map(|p| {
            let fix = t.process(p);
            let pos = fix.position.expect("test spot is always visible");
            (pos.x, pos.y)
        })
        .collect()
}

/// Default open options with the given video decoder.
pub fn opts(decoder: spotlever::source::VideoDecoder) -> spotlever::source::OpenOptions {
    spotlever::source::OpenOptions {
        decoder,
        ..Default::default()
    }
}

/// Every frame `opts` gives from `path`, and the error that ended the reading early, if any; an
/// unreadable frame fails the test.
pub fn frames_of(
    path: &Path,
    opts: &spotlever::source::OpenOptions,
) -> (
    Vec<spotlever::frame::Frame>,
    Option<spotlever::source::SourceError>,
) {
    use spotlever::source::Delivery;
    let mut src = spotlever::source::open(path, opts)
        .unwrap_or_else(|e| panic!("open {}: {e}", path.display()));
    let mut out = Vec::new();
    while let Some(d) = src.next_delivery() {
        match d {
            Ok(Delivery::Frame(f)) => out.push(f),
            Ok(Delivery::Unreadable { origin, reason, .. }) => panic!("{origin}: {reason}"),
            Err(e) => return (out, Some(e)),
        }
    }
    (out, None)
}
