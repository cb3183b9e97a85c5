//! The in-process decoder (feature `linked-ffmpeg`) against the `ffmpeg` program reading the same
//! files: the same frames, times and pixels for every way pictures are turned into planes, the same
//! `--every` thinning, the same crop, and clear errors on cut-off, broken and picture-less files.
//! The `ffmpeg` program is the reference here (it makes the clips and decodes them a second way), so
//! these tests need it; without the feature this file compiles to nothing.
#![cfg(feature = "linked-ffmpeg")]

mod support;

use spotlever::frame::{Channel, Frame, Roi};
use spotlever::source::{LinkedSource, OpenOptions, SourceError, VideoDecoder};
use spotlever::units::Seconds;
use std::path::{Path, PathBuf};
use support::*;

const W: usize = 160;
const H: usize = 120;

/// `n` test frames at 10 fps encoded with `args` into `dir/name`.
fn clip(dir: &Path, n: usize, name: &str, args: &[&str]) -> PathBuf {
    frames_clip(dir, n, (W, H), name, args)
}

/// Both decoders on `path` with `o` (decoder field overridden): frames and ending errors.
fn both(path: &Path, o: &OpenOptions) -> [(Vec<Frame>, Option<SourceError>); 2] {
    [VideoDecoder::Linked, VideoDecoder::Ffmpeg].map(|decoder| {
        frames_of(
            path,
            &OpenOptions {
                decoder,
                ..o.clone()
            },
        )
    })
}

/// Same frame indices and times (exactly), and pixels no further apart than `tolerance` DN.
fn assert_alike(path: &Path, o: &OpenOptions, tolerance: u16, label: &str) -> Vec<Frame> {
    let [(linked, e1), (program, e2)] = both(path, o);
    assert!(e1.is_none() && e2.is_none(), "{label}: {e1:?} / {e2:?}");
    assert!(!linked.is_empty(), "{label}: no frames");
    assert_eq!(linked.len(), program.len(), "{label}: frame counts");
    for (a, b) in linked.iter().zip(&program) {
        assert_eq!(a.index, b.index, "{label}");
        assert_eq!(a.t, b.t, "{label}: frame {}", a.index);
        assert_eq!(
            (a.plane.width(), a.plane.height(), a.plane.white),
            (b.plane.width(), b.plane.height(), b.plane.white),
            "{label}"
        );
        let worst = a
            .plane
            .values()
            .zip(b.plane.values())
            .map(|(x, y)| x.abs_diff(y))
            .max()
            .unwrap_or(0);
        assert!(
            worst <= tolerance,
            "{label}: frame {} differs by {worst} DN (allowed {tolerance})",
            a.index
        );
    }
    linked
}

#[test]
fn luma_planes_are_the_ffmpeg_programs_to_the_bit() {
    if !ffmpeg_or_skip("luma_planes_are_the_ffmpeg_programs_to_the_bit") {
        return;
    }
    // Studio-range 4:2:0 with B-frames (libx264's defaults), full-range 4:2:0, and 4:4:4: the
    // decoder's Y plane is used as it is by both paths, so nothing may differ.
    for (name, args) in [
        (
            "default.mp4",
            &["-c:v", "libx264", "-pix_fmt", "yuv420p"][..],
        ),
        ("full.mp4", &["-c:v", "libx264", "-pix_fmt", "yuvj420p"][..]),
        ("444.mp4", &["-c:v", "libx264", "-pix_fmt", "yuv444p"][..]),
    ] {
        let d = tempfile::tempdir().unwrap();
        let path = clip(d.path(), 24, name, args);
        let frames = assert_alike(&path, &opts(VideoDecoder::Auto), 0, name);
        assert_eq!(frames.len(), 24, "{name}");
        for (i, f) in frames.iter().enumerate() {
            assert_eq!(f.index, i as u64);
            assert!((f.t.0 - i as f64 / 10.0).abs() < 1e-9, "{name}: {}", f.t.0);
        }
    }
}

#[test]
fn scaled_pictures_are_the_ffmpeg_programs_to_the_bit() {
    if !ffmpeg_or_skip("scaled_pictures_are_the_ffmpeg_programs_to_the_bit") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    // An RGB format (first plane not luma): both paths convert to gray with ffmpeg's scaler.
    let rgb = clip(
        d.path(),
        12,
        "rgb.mkv",
        &["-c:v", "ffv1", "-pix_fmt", "bgr0"],
    );
    // Both go through the same scaler with the same flags, so nothing may differ.
    assert_alike(&rgb, &opts(VideoDecoder::Auto), 0, "bgr0 to gray");
    // A colour channel of a YUV clip: packed RGB from the scaler, then the channel.
    let yuv = clip(
        d.path(),
        12,
        "yuv.mp4",
        &["-c:v", "libx264", "-pix_fmt", "yuv420p"],
    );
    let red = OpenOptions {
        channel: Channel::Red,
        ..opts(VideoDecoder::Auto)
    };
    assert_alike(&yuv, &red, 0, "red channel");
}

#[test]
fn crop_gives_the_rectangle_of_whole_pictures() {
    if !ffmpeg_or_skip("crop_gives_the_rectangle_of_whole_pictures") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    let path = clip(
        d.path(),
        10,
        "c.mp4",
        &["-c:v", "libx264", "-pix_fmt", "yuv420p"],
    );
    let rect = Roi {
        x: 17,
        y: 9,
        width: 101,
        height: 63,
    };
    let cut_opts = OpenOptions {
        crop: Some(rect),
        ..opts(VideoDecoder::Linked)
    };
    let src = LinkedSource::open(&path, &cut_opts).unwrap();
    assert_eq!(spotlever::source::FrameSource::info(&src).crop, Some(rect));
    drop(src);
    let (cut, e) = frames_of(&path, &cut_opts);
    assert!(e.is_none(), "{e:?}");
    let (whole, _) = frames_of(&path, &opts(VideoDecoder::Linked));
    assert_eq!(cut.len(), whole.len());
    for (c, w) in cut.iter().zip(&whole) {
        assert_eq!((c.plane.width(), c.plane.height()), (101, 63));
        for y in 0..63 {
            for x in 0..101 {
                assert_eq!(c.plane.get(x, y), w.plane.get(x + 17, y + 9));
            }
        }
    }
    // The same rectangle cut by the ffmpeg program.
    assert_alike(&path, &cut_opts, 0, "crop");
}

#[test]
fn every_keeps_the_frames_a_full_decode_keeps() {
    if !ffmpeg_or_skip("every_keeps_the_frames_a_full_decode_keeps") {
        return;
    }
    // With B-frames; without, starting at 0.5 s in a 1/30000 time base; sparse key frames.
    let cases: [(&str, Vec<String>, bool); 3] = [
        ("b.mp4", gop_args(10, &[]), true),
        ("late.mp4", gop_args(10, &LATE_START), true),
        ("sparse.mp4", gop_args(25, &[]), false),
    ];
    for (name, args, key_only) in cases {
        let d = tempfile::tempdir().unwrap();
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        let path = clip(d.path(), 45, name, &args);
        let thin = OpenOptions {
            every: Some(Seconds(1.0)),
            ..opts(VideoDecoder::Linked)
        };
        let src = LinkedSource::open(&path, &thin).unwrap();
        assert_eq!(src.key_frames_only(), key_only, "{name}");
        drop(src);
        let kept = assert_alike(&path, &thin, 0, name);
        let idx: Vec<u64> = kept.iter().map(|f| f.index).collect();
        assert_eq!(idx, [0, 10, 20, 30, 40], "{name}");
        // And the same pictures as those frames of a full decode.
        let (all, _) = frames_of(&path, &opts(VideoDecoder::Linked));
        for f in &kept {
            assert_eq!(f.plane, all[f.index as usize].plane, "{name}: {}", f.index);
            assert_eq!(f.t, all[f.index as usize].t, "{name}");
        }
    }
}

#[test]
fn variable_frame_rate_times_match_the_ffmpeg_program() {
    if !ffmpeg_or_skip("variable_frame_rate_times_match_the_ffmpeg_program") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    let (path, truth) = vfr_clip(d.path(), 12, W, H);
    let frames = assert_alike(&path, &opts(VideoDecoder::Auto), 0, "vfr");
    for (f, want) in frames.iter().zip(&truth) {
        assert!(
            (f.t.0 - want).abs() < 1e-3,
            "frame {}: {} s",
            f.index,
            f.t.0
        );
    }
}

#[test]
fn cut_off_file_keeps_the_frames_before_and_says_where() {
    let d = tempfile::tempdir().unwrap();
    let path = cut_clip(d.path());
    let (frames, err) = frames_of(&path, &opts(VideoDecoder::Linked));
    assert!(
        frames.len() >= 5 && frames.len() < 30,
        "{} frames",
        frames.len()
    );
    let msg = err
        .expect("a cut-off file must end with an error")
        .to_string();
    assert!(msg.contains("cut.mp4"), "{msg}");
    assert!(msg.contains("truncated"), "{msg}");
    assert!(msg.contains(&format!("{} frames", frames.len())), "{msg}");
    // Key frames only (0, 16 and 29 of 30 at 10 fps): the index tells the file ends early.
    let thin = OpenOptions {
        every: Some(Seconds(1.6)),
        ..opts(VideoDecoder::Linked)
    };
    let (_, err) = frames_of(&path, &thin);
    let msg = err.expect("error").to_string();
    assert!(msg.contains("index lists 30 frames"), "{msg}");
}

#[test]
fn files_without_pictures_are_refused_with_the_reason() {
    let d = tempfile::tempdir().unwrap();
    let junk = d.path().join("junk.mp4");
    std::fs::write(&junk, b"this is not a video, only some words in a file").unwrap();
    let e = LinkedSource::open(&junk, &opts(VideoDecoder::Linked))
        .err()
        .expect("junk must be refused")
        .to_string();
    assert!(
        e.contains("junk.mp4") && e.contains("is it a video file"),
        "{e}"
    );
    let missing = LinkedSource::open(&d.path().join("none.mp4"), &opts(VideoDecoder::Linked))
        .err()
        .expect("missing")
        .to_string();
    assert!(missing.contains("no such file"), "{missing}");
    if !ffmpeg_or_skip("files_without_pictures_are_refused_with_the_reason (audio part)") {
        return;
    }
    let audio = d.path().join("tone.m4a");
    ffmpeg(&[
        "-f",
        "lavfi",
        "-i",
        "sine=frequency=440:duration=0.5",
        &audio.to_string_lossy(),
    ]);
    let e = LinkedSource::open(&audio, &opts(VideoDecoder::Linked))
        .err()
        .expect("audio only")
        .to_string();
    assert!(
        e.contains("tone.m4a") && e.contains("no video stream"),
        "{e}"
    );
}

#[test]
fn stopping_early_releases_the_decoder() {
    if !ffmpeg_or_skip("stopping_early_releases_the_decoder") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    let path = clip(
        d.path(),
        40,
        "s.mp4",
        &["-c:v", "libx264", "-pix_fmt", "yuv420p"],
    );
    // More pictures than the queue holds are decoded ahead; dropping the source after two must
    // end the decoding thread (the drop joins it, so a hang would stop this test).
    for _ in 0..3 {
        let mut src = spotlever::source::open(&path, &opts(VideoDecoder::Linked)).unwrap();
        for _ in 0..2 {
            assert!(matches!(
                src.next_delivery(),
                Some(Ok(spotlever::source::Delivery::Frame(_)))
            ));
        }
        drop(src);
    }
}
