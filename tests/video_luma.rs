//! The ffmpeg reader's fast paths, checked against ffmpeg's own conversions: the luma plane sent as
//! decoded (and widened from studio range here) against ffmpeg's scaler asked for a gray picture, for
//! limited- and full-range clips; and key frames passed on to a second decoder against the same
//! frames of a full decode, on a clip without B-frames whose timestamps start late and use another
//! time base.

mod source_support;

use source_support::*;
use spotlever::frame::{Frame, Plane};
use spotlever::source::{open, Delivery, FfmpegSource, OpenOptions, VideoDecoder};
use spotlever::units::Seconds;
use std::path::Path;
use std::process::Command;

const W: usize = 160;
const H: usize = 120;
const N: usize = 45;

fn ffmpeg_opts() -> OpenOptions {
    OpenOptions {
        decoder: VideoDecoder::Ffmpeg,
        ..OpenOptions::default()
    }
}

fn frames_of(path: &Path, opts: &OpenOptions) -> Vec<Frame> {
    let mut src = open(path, opts).unwrap_or_else(|e| panic!("open {}: {e}", path.display()));
    let mut out = Vec::new();
    while let Some(d) = src.next_delivery() {
        match d {
            Ok(Delivery::Frame(f)) => out.push(f),
            Ok(Delivery::Unreadable { origin, reason, .. }) => panic!("{origin}: {reason}"),
            Err(e) => panic!("{}: {e}", path.display()),
        }
    }
    out
}

/// Every frame of `clip` as ffmpeg's scaler makes it gray (`-pix_fmt gray`), the conversion the
/// reader used to ask ffmpeg for.
fn scaler_gray(clip: &Path) -> Vec<Vec<u8>> {
    let out = Command::new("ffmpeg")
        .args(["-hide_banner", "-loglevel", "error", "-i"])
        .arg(clip)
        .args([
            "-vsync",
            "passthrough",
            "-f",
            "rawvideo",
            "-pix_fmt",
            "gray",
            "pipe:1",
        ])
        .output()
        .expect("run ffmpeg");
    assert!(out.status.success(), "ffmpeg gray conversion failed");
    out.stdout.chunks_exact(W * H).map(<[u8]>::to_vec).collect()
}

/// Largest absolute difference between the reader's planes and ffmpeg's gray pictures.
fn worst_difference(clip: &Path) -> (u16, usize) {
    let ours = frames_of(clip, &ffmpeg_opts());
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

#[test]
fn limited_range_luma_matches_ffmpegs_gray_within_one_level() {
    if !ffmpeg_or_skip("limited_range_luma_matches_ffmpegs_gray_within_one_level") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    write_png_frames(d.path(), N, W, H);
    let clip = d.path().join("tv.mp4");
    encode_pngs(
        d.path(),
        10,
        &[
            "-c:v",
            "libx264",
            "-pix_fmt",
            "yuv420p",
            "-color_range",
            "tv",
        ],
        &clip,
    );
    // Both sides widen 16..235 to 0..255; ffmpeg's scaler works in fixed point and may round the
    // other way where the exact value is close to a half (common practice, no source), so one level.
    let (worst, n) = worst_difference(&clip);
    assert_eq!(n, N);
    assert!(worst <= 1, "largest difference {worst} levels");
}

#[test]
fn full_range_luma_is_passed_through_unchanged() {
    if !ffmpeg_or_skip("full_range_luma_is_passed_through_unchanged") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    write_png_frames(d.path(), N, W, H);
    let clip = d.path().join("pc.mp4");
    encode_pngs(
        d.path(),
        10,
        &["-c:v", "libx264", "-pix_fmt", "yuvj420p"],
        &clip,
    );
    let (worst, n) = worst_difference(&clip);
    assert_eq!(n, N);
    assert_eq!(worst, 0, "full-range luma must not be rescaled");
}

#[test]
fn key_frames_passed_on_keep_the_same_frames_times_and_pictures() {
    if !ffmpeg_or_skip("key_frames_passed_on_keep_the_same_frames_times_and_pictures") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    write_png_frames(d.path(), N, W, H);
    let clip = d.path().join("intra_late.mp4");
    // No B-frames, a key frame every second, timestamps starting at 0.5 s in a 1/30000 time base.
    encode_pngs(
        d.path(),
        10,
        &[
            "-c:v",
            "libx264",
            "-bf",
            "0",
            "-pix_fmt",
            "yuv420p",
            "-g",
            "10",
            "-keyint_min",
            "10",
            "-sc_threshold",
            "0",
            "-video_track_timescale",
            "30000",
            "-output_ts_offset",
            "0.5",
        ],
        &clip,
    );
    let thin = OpenOptions {
        every: Some(Seconds(1.0)),
        ..ffmpeg_opts()
    };
    let src = FfmpegSource::open(&clip, &thin).unwrap();
    assert!(src.key_frames_only());
    drop(src);
    let kept = frames_of(&clip, &thin);
    let all = frames_of(&clip, &ffmpeg_opts());
    let idx: Vec<u64> = kept.iter().map(|f| f.index).collect();
    assert_eq!(idx, [0, 10, 20, 30, 40]);
    for f in &kept {
        let full = &all[f.index as usize];
        assert_eq!(f.t, full.t, "frame {}", f.index);
        assert!(
            (f.t.0 - f.index as f64 / 10.0).abs() < 1e-9,
            "time of frame {}",
            f.index
        );
        assert_eq!(f.plane, full.plane, "frame {}", f.index);
    }
    let thinned: Vec<&Plane> = kept.iter().map(|f| &f.plane).collect();
    let from_full: Vec<&Plane> = kept.iter().map(|f| &all[f.index as usize].plane).collect();
    assert_eq!(track_positions(&thinned), track_positions(&from_full));
}
