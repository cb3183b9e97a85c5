//! Video readers on clips made by an external encoder (ffmpeg's libx264): the ffmpeg path on a
//! default-settings clip with B-frames, the built-in path on the committed Baseline clip, key-frame
//! thinning, and agreement with the same frames read from PNG.

mod support;

use spotlever::frame::{Channel, Frame, Plane};
use spotlever::source::{FfmpegSource, OpenOptions, VideoDecoder};
use spotlever::units::Seconds;
use std::path::Path;
use support::*;

const W: usize = 160;
const H: usize = 120;

fn png_plane(dir: &Path, i: usize) -> Plane {
    let img = image::open(dir.join(format!("img{i}.png"))).expect("png");
    Plane::from_u8(W, H, img.to_luma8().as_raw())
}

/// Compare decoded frames with the PNG originals: RMS position difference, and the position error
/// the codec's pixel error explains.
///
/// A centroid `x = Σ w_i x_i / Σ w_i` with independent pixel errors of standard deviation `s` has
/// `var(x) = s² Σ (x_i - x)² / (Σ w_i)²` (first-order propagation, JCGM 100:2008 eq. 10).
fn compare(dir: &Path, frames: &[Frame]) -> (f64, f64) {
    let pngs: Vec<Plane> = frames
        .iter()
        .map(|f| png_plane(dir, f.index as usize))
        .collect();
    let a = track_positions(&pngs.iter().collect::<Vec<_>>());
    let b = track_positions(&frames.iter().map(|f| &f.plane).collect::<Vec<_>>());
    let (mut se, mut sv) = (0.0, 0.0);
    for ((png, f), (pa, pb)) in pngs.iter().zip(frames).zip(a.iter().zip(&b)) {
        se += (pa.0 - pb.0).powi(2) + (pa.1 - pb.1).powi(2);
        // Codec pixel error variance over the whole frame.
        let d: f64 = png
            .values()
            .zip(f.plane.values())
            .map(|(x, y)| (x as f64 - y as f64).powi(2))
            .sum::<f64>()
            / (W * H) as f64;
        // Second moment and weight of a 3-sigma window of the background-subtracted spot.
        let (ax, ay) = *pa;
        let (cx, cy) = (ax.round() as i64, ay.round() as i64);
        let (mut m2, mut wsum) = (0.0, 0.0);
        for y in cy - 8..=cy + 8 {
            for x in cx - 8..=cx + 8 {
                if x < 0 || y < 0 || x >= W as i64 || y >= H as i64 {
                    continue;
                }
                let v = (png.get(x as usize, y as usize).unwrap() as f64 - 40.0).max(0.0);
                wsum += v;
                m2 += (x as f64 - ax).powi(2) + (y as f64 - ay).powi(2);
            }
        }
        sv += d * m2 / (wsum * wsum);
    }
    let n = frames.len() as f64;
    ((se / n).sqrt(), (sv / n).sqrt())
}

#[test]
fn ffmpeg_path_reads_default_x264_clip_with_b_frames_like_the_pngs() {
    if !ffmpeg_or_skip("ffmpeg_path_reads_default_x264_clip_with_b_frames_like_the_pngs") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    let n = 40;
    let clip = frames_clip(
        d.path(),
        n,
        (W, H),
        "default.mp4",
        &["-c:v", "libx264", "-pix_fmt", "yuv420p"],
    );
    assert!(
        has_b_frames(&clip),
        "libx264 defaults should have produced B-frames"
    );
    check_against_pngs(
        d.path(),
        &clip,
        n,
        VideoDecoder::Ffmpeg,
        "ffmpeg path, default x264",
    );
}

/// Decode `clip`, check frame indices and 10 fps times, and compare positions with the PNGs.
fn check_against_pngs(dir: &Path, clip: &Path, n: usize, decoder: VideoDecoder, label: &str) {
    let (frames, err) = frames_of(clip, &opts(decoder));
    assert!(err.is_none(), "{err:?}");
    assert_eq!(frames.len(), n);
    for (i, f) in frames.iter().enumerate() {
        assert_eq!(f.index, i as u64);
        // 10 fps in an integer time base: times are multiples of 0.1 s up to float rounding.
        assert!(
            (f.t.0 - i as f64 * 0.1).abs() < 1e-9,
            "frame {i} at {}",
            f.t.0
        );
    }
    let (rms, codec) = compare(dir, &frames);
    eprintln!("{label}: RMS position difference {rms:.4} px; codec loss explains {codec:.4} px");
    assert!(rms <= 0.1 + codec, "RMS {rms} px > 0.1 + {codec}");
}

#[test]
fn builtin_path_reads_committed_baseline_clip_like_the_pngs() {
    let d = tempfile::tempdir().unwrap();
    let n = 30;
    write_png_frames(d.path(), n, W, H);
    check_against_pngs(
        d.path(),
        &committed_clip(),
        n,
        VideoDecoder::Builtin,
        "built-in path, Baseline clip",
    );
}

#[test]
fn builtin_and_ffmpeg_decode_the_baseline_clip_alike() {
    if !ffmpeg_or_skip("builtin_and_ffmpeg_decode_the_baseline_clip_alike") {
        return;
    }
    let (a, _) = frames_of(&committed_clip(), &opts(VideoDecoder::Builtin));
    let (b, _) = frames_of(&committed_clip(), &opts(VideoDecoder::Ffmpeg));
    assert_eq!(a.len(), b.len());
    // H.264 decoding is bit-exact (ITU-T H.264 §8 specifies the decoded samples exactly); only the
    // studio-to-full range expansion's rounding may differ, by at most 1 DN.
    for (fa, fb) in a.iter().zip(&b) {
        assert_eq!((fa.index, fa.t), (fb.index, fb.t));
        let worst = fa
            .plane
            .values()
            .zip(fb.plane.values())
            .map(|(x, y)| (x as i32 - y as i32).abs())
            .max()
            .unwrap_or(0);
        assert!(
            worst <= 1,
            "frame {}: decoders differ by {worst} DN",
            fa.index
        );
    }
}

/// `n` test frames at 10 fps encoded by libx264 with a key frame every `gop` frames, plus `extra`
/// encoder arguments.
fn gop_clip(dir: &Path, n: usize, gop: u32, extra: &[&str]) -> std::path::PathBuf {
    let args = gop_args(gop, extra);
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    frames_clip(dir, n, (W, H), &format!("gop{gop}.mp4"), &args)
}

#[test]
fn every_decodes_only_key_frames_and_keeps_the_same_frames() {
    if !ffmpeg_or_skip("every_decodes_only_key_frames_and_keeps_the_same_frames") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    let clip = gop_clip(d.path(), 45, 10, &[]);
    let thin = OpenOptions {
        every: Some(Seconds(1.0)),
        ..opts(VideoDecoder::Ffmpeg)
    };
    let src = FfmpegSource::open(&clip, &thin).unwrap();
    assert!(
        src.key_frames_only(),
        "one key frame per second allows key-frame decoding"
    );
    drop(src);
    assert_keeps_same_frames(&clip, &thin, VideoDecoder::Ffmpeg);
}

#[test]
fn every_passes_key_frames_on_when_there_are_no_b_frames() {
    if !ffmpeg_or_skip("every_passes_key_frames_on_when_there_are_no_b_frames") {
        return;
    }
    // No B-frames (the key-frame packets go through a second container to the decoder), with
    // timestamps starting at 0.5 s in a 1/30000 time base, so the times must survive the copy.
    let d = tempfile::tempdir().unwrap();
    let clip = gop_clip(d.path(), 45, 10, &LATE_START);
    assert!(!has_b_frames(&clip));
    let thin = OpenOptions {
        every: Some(Seconds(1.0)),
        ..opts(VideoDecoder::Ffmpeg)
    };
    let src = FfmpegSource::open(&clip, &thin).unwrap();
    assert!(src.key_frames_only());
    drop(src);
    assert_keeps_same_frames(&clip, &thin, VideoDecoder::Ffmpeg);
    let (kept, _) = frames_of(&clip, &thin);
    for f in &kept {
        assert!(
            (f.t.0 - f.index as f64 / 10.0).abs() < 1e-9,
            "frame {} at {} s",
            f.index,
            f.t.0
        );
    }
}

/// Thinned frames are frames 0, 10, ... 40 of the full decode, with identical times, pictures and
/// tracked positions.
fn assert_keeps_same_frames(clip: &Path, thin: &OpenOptions, decoder: VideoDecoder) {
    let (kept, err) = frames_of(clip, thin);
    assert!(err.is_none(), "{err:?}");
    let (all, _) = frames_of(clip, &opts(decoder));
    let idx: Vec<u64> = kept.iter().map(|f| f.index).collect();
    assert_eq!(idx, [0, 10, 20, 30, 40]);
    for f in &kept {
        let full = &all[f.index as usize];
        assert_eq!(f.t, full.t);
        // Key frames decode without reference to other frames, so the pictures are identical.
        assert_eq!(f.plane, full.plane, "frame {}", f.index);
    }
    let thinned: Vec<&Plane> = kept.iter().map(|f| &f.plane).collect();
    let from_full: Vec<&Plane> = kept.iter().map(|f| &all[f.index as usize].plane).collect();
    assert_eq!(track_positions(&thinned), track_positions(&from_full));
}

#[test]
fn every_falls_back_to_full_decode_when_key_frames_are_sparse() {
    if !ffmpeg_or_skip("every_falls_back_to_full_decode_when_key_frames_are_sparse") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    let clip = gop_clip(d.path(), 45, 25, &[]);
    let thin = OpenOptions {
        every: Some(Seconds(1.0)),
        ..opts(VideoDecoder::Ffmpeg)
    };
    let src = FfmpegSource::open(&clip, &thin).unwrap();
    assert!(!src.key_frames_only());
    drop(src);
    let (kept, _) = frames_of(&clip, &thin);
    let idx: Vec<u64> = kept.iter().map(|f| f.index).collect();
    assert_eq!(idx, [0, 10, 20, 30, 40]);
}

#[test]
fn variable_frame_rate_times_are_the_presentation_times() {
    if !ffmpeg_or_skip("variable_frame_rate_times_are_the_presentation_times") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    let n = 12;
    let (clip, truth) = vfr_clip(d.path(), n, W, H);
    let (frames, err) = frames_of(&clip, &opts(VideoDecoder::Ffmpeg));
    assert!(err.is_none(), "{err:?}");
    assert_eq!(frames.len(), n);
    for (f, want) in frames.iter().zip(&truth) {
        // Matroska stores milliseconds.
        assert!(
            (f.t.0 - want).abs() <= 0.0005 + 1e-9,
            "frame {}: {} vs {want}",
            f.index,
            f.t.0
        );
    }
}

#[test]
fn red_channel_from_video_differs_from_luma() {
    if !ffmpeg_or_skip("red_channel_from_video_differs_from_luma") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    let clip = d.path().join("red.mp4");
    ffmpeg(&[
        "-f",
        "lavfi",
        "-i",
        "color=c=0xC80000:size=32x32:rate=5",
        "-frames:v",
        "3",
        "-c:v",
        "libx264",
        "-pix_fmt",
        "yuv420p",
        &clip.to_string_lossy(),
    ]);
    let red = OpenOptions {
        channel: Channel::Red,
        ..opts(VideoDecoder::Ffmpeg)
    };
    let (r, _) = frames_of(&clip, &red);
    let (l, _) = frames_of(&clip, &opts(VideoDecoder::Ffmpeg));
    let (rv, lv) = (
        r[0].plane.get(16, 16).unwrap() as f64,
        l[0].plane.get(16, 16).unwrap() as f64,
    );
    // Pure red 200: red channel 200, BT.601 luma 0.299 * 200 = 60 (ITU-R BT.601), within codec loss.
    assert!((rv - 200.0).abs() <= 4.0, "red {rv}");
    assert!((lv - 60.0).abs() <= 4.0, "luma {lv}");
}

/// Rebuilds tests/data/baseline_160x120.mp4 (see tests/data/README.md):
/// `cargo test --test video_paths -- --ignored regenerate_baseline_clip`.
#[test]
#[ignore]
fn regenerate_baseline_clip() {
    let d = tempfile::tempdir().unwrap();
    write_png_frames(d.path(), 30, W, H);
    encode_pngs(
        d.path(),
        10,
        &[
            "-c:v",
            "libx264",
            "-profile:v",
            "baseline",
            "-pix_fmt",
            "yuv420p",
            "-crf",
            "18",
            "-movflags",
            "+faststart",
            "-map_metadata",
            "-1",
            "-bitexact",
        ],
        &committed_clip(),
    );
}

#[test]
fn builtin_every_decodes_only_key_frames_and_keeps_the_same_frames() {
    if !ffmpeg_or_skip("builtin_every_decodes_only_key_frames_and_keeps_the_same_frames") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    let clip = gop_clip(d.path(), 45, 10, &["-profile:v", "baseline"]);
    let thin = OpenOptions {
        every: Some(Seconds(1.0)),
        ..opts(VideoDecoder::Builtin)
    };
    let src = spotlever::source::BuiltinH264Source::open(&clip, &thin).unwrap();
    assert!(src.key_frames_only());
    drop(src);
    assert_keeps_same_frames(&clip, &thin, VideoDecoder::Builtin);
    // A finer --every than the key-frame spacing needs the frames in between: a full decode,
    // thinned by the same rule.
    let half = OpenOptions {
        every: Some(Seconds(0.5)),
        ..opts(VideoDecoder::Builtin)
    };
    let (kept, _) = frames_of(&clip, &half);
    let idx: Vec<u64> = kept.iter().map(|f| f.index).collect();
    assert_eq!(idx, [0, 5, 10, 15, 20, 25, 30, 35, 40]);
}
