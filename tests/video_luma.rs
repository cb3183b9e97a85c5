//! The ffmpeg reader's luma path checked against ffmpeg's own conversion: the luma plane sent as
//! decoded (and read as widened from studio range here) against ffmpeg's scaler asked for a gray
//! picture, for limited- and full-range clips.

mod support;

use spotlever::source::{OpenOptions, VideoDecoder};
use std::path::Path;
use support::*;

const W: usize = 160;
const H: usize = 120;
const N: usize = 45;

fn ffmpeg_opts() -> OpenOptions {
    OpenOptions {
        decoder: VideoDecoder::Ffmpeg,
        ..OpenOptions::default()
    }
}

/// Every frame of `clip` as ffmpeg's scaler makes it gray (`-pix_fmt gray`), the conversion the
/// reader used to ask ffmpeg for.
fn scaler_gray(clip: &Path) -> Vec<Vec<u8>> {
    let gray = ffmpeg(&[
        "-i",
        &clip.to_string_lossy(),
        "-vsync",
        "passthrough",
        "-f",
        "rawvideo",
        "-pix_fmt",
        "gray",
        "pipe:1",
    ]);
    gray.chunks_exact(W * H).map(<[u8]>::to_vec).collect()
}

/// Largest absolute difference between the reader's planes and ffmpeg's gray pictures.
fn worst_difference(clip: &Path) -> (u16, usize) {
    let (ours, err) = frames_of(clip, &ffmpeg_opts());
    assert!(err.is_none(), "{err:?}");
    let theirs = scaler_gray(clip);
    assert_eq!(ours.len(), theirs.len(), "frame count");
    let mut worst = 0u16;
    for (f, g) in ours.iter().zip(&theirs) {
        for (y, row) in g.chunks_exact(W).enumerate() {
            for (x, &v) in row.iter().enumerate() {
                let mine = f.plane.get(x, y).expect("pixel inside the plane");
                worst = worst.max(mine.abs_diff(v as u16));
            }
        }
    }
    (worst, ours.len())
}

/// Encode the test frames with libx264 at pixel format `pix_fmt` (plus `extra`) and compare.
fn encoded_difference(pix_fmt: &str, extra: &[&str]) -> (u16, usize) {
    let d = tempfile::tempdir().unwrap();
    let mut args = vec!["-c:v", "libx264", "-pix_fmt", pix_fmt];
    args.extend_from_slice(extra);
    let clip = frames_clip(d.path(), N, (W, H), &format!("{pix_fmt}.mp4"), &args);
    worst_difference(&clip)
}

#[test]
fn limited_range_luma_matches_ffmpegs_gray_within_one_level() {
    if !ffmpeg_or_skip("limited_range_luma_matches_ffmpegs_gray_within_one_level") {
        return;
    }
    // Both sides widen 16..235 to 0..255; ffmpeg's scaler works in fixed point and may round the
    // other way where the exact value is close to a half (common practice, no source), so one level.
    let (worst, n) = encoded_difference("yuv420p", &["-color_range", "tv"]);
    assert_eq!(n, N);
    assert!(worst <= 1, "largest difference {worst} levels");
}

#[test]
fn full_range_luma_is_passed_through_unchanged() {
    if !ffmpeg_or_skip("full_range_luma_is_passed_through_unchanged") {
        return;
    }
    let (worst, n) = encoded_difference("yuvj420p", &[]);
    assert_eq!(n, N);
    assert_eq!(worst, 0, "full-range luma must not be rescaled");
}
