//! Helpers shared by the source, video and track tests: rendered test frames with known spot
//! centres, an ffmpeg gate that skips loudly (or fails when SPOTLEVER_REQUIRE_FFMPEG=1), and small
//! wrappers around the `ffmpeg` program.
#![allow(dead_code)]

use rand::rngs::StdRng;
use rand::SeedableRng;
use rand_distr::{Distribution, Normal};
use std::path::{Path, PathBuf};
use std::process::Command;

/// A Gaussian spot on a flat background, sampled at pixel centres, with additive Gaussian noise and
/// 8-bit quantisation. Returns row-major gray bytes.
#[allow(clippy::too_many_arguments)]
pub fn render_gray(
    w: usize,
    h: usize,
    cx: f64,
    cy: f64,
    sigma: f64,
    peak: f64,
    bg: f64,
    noise: f64,
    seed: u64,
) -> Vec<u8> {
    let mut rng = StdRng::seed_from_u64(seed);
    let n = Normal::new(0.0, noise.max(1e-12)).expect("valid normal");
    let mut out = Vec::with_capacity(w * h);
    for y in 0..h {
        for x in 0..w {
            let r2 = (x as f64 - cx).powi(2) + (y as f64 - cy).powi(2);
            let v = bg + peak * (-r2 / (2.0 * sigma * sigma)).exp() + n.sample(&mut rng);
            out.push(v.round().clamp(0.0, 255.0) as u8);
        }
    }
    out
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
            let px = render_gray(w, h, cx, cy, 2.5, 180.0, 40.0, 2.0, 1000 + i as u64);
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

/// Whether the ffmpeg program can be used; prints a SKIP line when not, and fails the test instead
/// when SPOTLEVER_REQUIRE_FFMPEG=1.
pub fn ffmpeg_or_skip(test: &str) -> bool {
    if spotlever::source::ffmpeg_available() {
        return true;
    }
    if std::env::var("SPOTLEVER_REQUIRE_FFMPEG").as_deref() == Ok("1") {
        panic!("{test}: ffmpeg/ffprobe not on PATH but SPOTLEVER_REQUIRE_FFMPEG=1");
    }
    eprintln!(
        "SKIP {test}: ffmpeg not on PATH (set SPOTLEVER_REQUIRE_FFMPEG=1 to make this a failure)"
    );
    false
}

/// Run ffmpeg with `args`, panicking with its stderr on failure (test set-up only).
pub fn ffmpeg(args: &[&str]) {
    let out = Command::new("ffmpeg")
        .args(["-hide_banner", "-loglevel", "error", "-y"])
        .args(args)
        .output()
        .expect("run ffmpeg");
    assert!(
        out.status.success(),
        "ffmpeg {:?} failed: {}",
        args,
        String::from_utf8_lossy(&out.stderr)
    );
}

/// Encode `dir/img%d.png` at `fps` into `out` with extra encoder arguments.
pub fn encode_pngs(dir: &Path, fps: u32, extra: &[&str], out: &Path) {
    let pattern = dir.join("img%d.png");
    let rate = fps.to_string();
    let mut args: Vec<&str> = vec!["-framerate", &rate, "-i"];
    let p = pattern.to_string_lossy().into_owned();
    let o = out.to_string_lossy().into_owned();
    args.push(&p);
    args.extend_from_slice(extra);
    args.push(&o);
    ffmpeg(&args);
}

/// Background-subtracted centroid in a 15x15 window around the brightest pixel: a test-side
/// reference measurement, used only to compare two readings of the same frames.
pub fn reference_centroid(plane: &spotlever::frame::Plane) -> (f64, f64) {
    let p = &plane.pixels;
    let (mut by, mut bx, mut best) = (0, 0, 0u16);
    for ((y, x), &v) in p.indexed_iter() {
        if v > best {
            best = v;
            by = y;
            bx = x;
        }
    }
    let mut sorted: Vec<u16> = p.iter().copied().collect();
    sorted.sort_unstable();
    let bg = sorted[sorted.len() / 2] as f64;
    let (mut sw, mut sx, mut sy) = (0.0, 0.0, 0.0);
    let r = 7i64;
    for y in (by as i64 - r).max(0)..=(by as i64 + r).min(p.nrows() as i64 - 1) {
        for x in (bx as i64 - r).max(0)..=(bx as i64 + r).min(p.ncols() as i64 - 1) {
            let v = (p[(y as usize, x as usize)] as f64 - bg).max(0.0);
            sw += v;
            sx += v * x as f64;
            sy += v * y as f64;
        }
    }
    (sx / sw, sy / sw)
}

pub fn committed_clip() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/baseline_160x120.mp4")
}
