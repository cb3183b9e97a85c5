//! Video clips for the tests: the committed Baseline clip and a cut-off copy of it, clips of the
//! rendered test frames made with the `ffmpeg` program, and a gate that skips a test loudly when that
//! program is missing (or fails it when SPOTLEVER_REQUIRE_FFMPEG=1).

use super::frames::write_png_frames;
use std::path::{Path, PathBuf};
use std::process::Command;

/// The committed 30-frame 160x120 Baseline clip at 10 fps (tests/data/README.md).
pub fn committed_clip() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/baseline_160x120.mp4")
}

/// The committed clip cut to its first 60 % of bytes as `dir/cut.mp4`. The clip has its index
/// first (faststart), so cutting the tail loses only the last frames.
pub fn cut_clip(dir: &Path) -> PathBuf {
    let clip = dir.join("cut.mp4");
    let whole = std::fs::read(committed_clip()).unwrap();
    std::fs::write(&clip, &whole[..whole.len() * 6 / 10]).unwrap();
    clip
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

/// Run ffmpeg with `args`, panicking with its stderr on failure (test set-up only); returns what
/// it wrote to standard output.
pub fn ffmpeg(args: &[&str]) -> Vec<u8> {
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
    out.stdout
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

/// `n` `w`x`h` test frames ([`write_png_frames`]) written into `dir` and encoded at 10 fps with
/// `args` into `dir/name`.
pub fn frames_clip(
    dir: &Path,
    n: usize,
    (w, h): (usize, usize),
    name: &str,
    args: &[&str],
) -> PathBuf {
    write_png_frames(dir, n, w, h);
    let out = dir.join(name);
    encode_pngs(dir, 10, args, &out);
    out
}

/// Encoder arguments for a clip without B-frames whose timestamps start at 0.5 s in a 1/30000
/// time base (times that must survive being copied between containers).
pub const LATE_START: [&str; 6] = [
    "-bf",
    "0",
    "-video_track_timescale",
    "30000",
    "-output_ts_offset",
    "0.5",
];

/// libx264 arguments for a key frame every `gop` frames (no extra ones at scene cuts), then `extra`.
pub fn gop_args(gop: u32, extra: &[&str]) -> Vec<String> {
    let g = gop.to_string();
    let mut args = vec![
        "-c:v",
        "libx264",
        "-pix_fmt",
        "yuv420p",
        "-g",
        &g,
        "-keyint_min",
        &g,
        "-sc_threshold",
        "0",
    ];
    args.extend_from_slice(extra);
    args.into_iter().map(String::from).collect()
}

/// Whether ffprobe finds a B-frame among the pictures of `clip`.
pub fn has_b_frames(clip: &Path) -> bool {
    let out = Command::new("ffprobe")
        .args([
            "-v",
            "error",
            "-select_streams",
            "v:0",
            "-show_entries",
            "frame=pict_type",
            "-of",
            "csv=p=0",
        ])
        .arg(clip)
        .output()
        .expect("ffprobe");
    String::from_utf8_lossy(&out.stdout)
        .lines()
        .any(|l| l.trim() == "B")
}

/// A variable-frame-rate Matroska clip of `n` frames in `dir` and the true presentation time of each.
/// Input at 20 fps (time base 1/20 s), re-timed to pts = 2i + 3 floor(i/2): gaps of 0.1 and 0.25 s
/// alternate. Matroska stores milliseconds.
pub fn vfr_clip(dir: &Path, n: usize, w: usize, h: usize) -> (PathBuf, Vec<f64>) {
    write_png_frames(dir, n, w, h);
    let clip = dir.join("vfr.mkv");
    encode_pngs(
        dir,
        20,
        &[
            "-vf",
            "setpts=2*N+3*floor(N/2)",
            "-vsync",
            "passthrough",
            "-c:v",
            "libx264",
            "-pix_fmt",
            "yuv420p",
        ],
        &clip,
    );
    let truth = (0..n)
        .map(|i| (2 * i + 3 * (i / 2)) as f64 / 20.0)
        .collect();
    (clip, truth)
}
