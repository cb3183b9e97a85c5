//! Video decoding speed: `--every 1` (key frames only) against decoding every frame with ffmpeg's
//! own threads, on 30 fps 1920x1080 clips with one key frame per second at about 16 Mbit/s,
//! generated at bench time with ffmpeg/libx264 (sensor-like temporal noise on a test pattern, so
//! P-frames carry most of the bits as in a real recording; the key-frame share is printed): one with
//! libx264's default B-frames (key frames decoded one at a time by a decoder that skips the rest)
//! and one without (key-frame packets passed on to a decoder whose threads work side by side). On
//! clips this short the fixed start-up (ffprobe twice, one or two ffmpeg processes: about 0.5 s)
//! takes most of the key-frame time; over a long recording the ratio approaches the bit share. The
//! clip without B-frames is also read cut to a 1920x160 band inside ffmpeg (`track --roi`), which
//! shows what moving whole pictures through the pipe costs. Built with the `linked-ffmpeg` feature,
//! the same reads are also timed with ffmpeg's libraries decoding inside the process (no pipe).
//!
//! Run: `cargo bench --bench decode` (and `cargo bench --features linked-ffmpeg --bench decode`).
//! Skips (with a message) when ffmpeg is not on PATH.

use criterion::{criterion_group, criterion_main, Criterion};
use spotlever::frame::Roi;
use spotlever::source::{
    ffmpeg_available, open, Delivery, OpenOptions, VideoDecoder, LINKED_FFMPEG,
};
use spotlever::units::Seconds;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::Duration;

const SECONDS: u32 = 6;

const BAND: Roi = Roi {
    x: 0,
    y: 460,
    width: 1920,
    height: 160,
};

fn make_clip(dir: &Path, b_frames: bool) -> PathBuf {
    let clip = dir.join(format!("bench_1080p30_g30_b{}.mp4", u8::from(b_frames)));
    let t = SECONDS.to_string();
    let status = Command::new("ffmpeg")
        .args([
            "-hide_banner",
            "-loglevel",
            "error",
            "-y",
            "-f",
            "lavfi",
            "-i",
        ])
        .arg("testsrc2=size=1920x1080:rate=30,noise=alls=8:allf=t")
        .args([
            "-t", &t, "-c:v", "libx264", "-preset", "veryfast", "-b:v", "16M", "-maxrate", "16M",
        ])
        .args([
            "-bufsize",
            "32M",
            "-g",
            "30",
            "-keyint_min",
            "30",
            "-sc_threshold",
            "0",
        ])
        .args(["-pix_fmt", "yuv420p"])
        .args(if b_frames { &[][..] } else { &["-bf", "0"][..] })
        .arg(&clip)
        .status()
        .expect("run ffmpeg");
    assert!(status.success(), "ffmpeg could not make the bench clip");
    clip
}

fn key_share(clip: &Path) -> f64 {
    let out = Command::new("ffprobe")
        .args([
            "-v",
            "error",
            "-select_streams",
            "v:0",
            "-show_entries",
            "packet=size,flags",
            "-of",
            "csv=p=0",
        ])
        .arg(clip)
        .output()
        .expect("ffprobe");
    let (mut all, mut key) = (0.0, 0.0);
    for l in String::from_utf8_lossy(&out.stdout).lines() {
        let mut c = l.split(',');
        let size: f64 = c.next().and_then(|s| s.parse().ok()).unwrap_or(0.0);
        all += size;
        if c.next().is_some_and(|f| f.contains('K')) {
            key += size;
        }
    }
    key / all
}

fn drain(clip: &Path, every: Option<Seconds>, crop: Option<Roi>) -> u64 {
    drain_with(VideoDecoder::Ffmpeg, clip, every, crop)
}

/// Read every delivery of `clip` with `decoder` and count the frames, giving buffers back as the
/// tracker's loop does.
fn drain_with(
    decoder: VideoDecoder,
    clip: &Path,
    every: Option<Seconds>,
    crop: Option<Roi>,
) -> u64 {
    let opts = OpenOptions {
        every,
        crop,
        decoder,
        ..OpenOptions::default()
    };
    let mut src = open(clip, &opts).expect("open bench clip");
    let mut n = 0;
    while let Some(d) = src.next_delivery() {
        if let Ok(Delivery::Frame(f)) = d {
            n += 1;
            src.recycle(f);
        }
    }
    n
}

fn bench(c: &mut Criterion) {
    if !ffmpeg_available() {
        eprintln!("SKIP decode benchmark: ffmpeg not on PATH");
        return;
    }
    let dir = tempfile::tempdir().expect("temp dir");
    for (b_frames, label) in [(true, "b_frames"), (false, "no_b_frames")] {
        let clip = make_clip(dir.path(), b_frames);
        let bytes = std::fs::metadata(&clip).map(|m| m.len()).unwrap_or(0);
        eprintln!(
            "bench clip ({label}): {:.1} Mbit/s, key frames hold {:.0}% of the bits",
            bytes as f64 * 8.0 / SECONDS as f64 / 1e6,
            100.0 * key_share(&clip)
        );
        assert_eq!(drain(&clip, Some(Seconds(1.0)), None), SECONDS as u64);
        let mut g = c.benchmark_group(format!("decode_1080p30_6s_{label}"));
        g.sample_size(10)
            .measurement_time(Duration::from_secs(20))
            .warm_up_time(Duration::from_secs(2));
        g.bench_function("every_frame_ffmpeg_threads", |b| {
            b.iter(|| drain(&clip, None, None))
        });
        g.bench_function("every_1s_key_frames_only", |b| {
            b.iter(|| drain(&clip, Some(Seconds(1.0)), None))
        });
        if !b_frames {
            // What crosses the pipe for a band along the scale (`track --roi`), a sixth of a picture.
            g.bench_function("every_frame_band_1920x160", |b| {
                b.iter(|| drain(&clip, None, Some(BAND)))
            });
        }
        if LINKED_FFMPEG {
            let linked = VideoDecoder::Linked;
            assert_eq!(
                drain_with(linked, &clip, Some(Seconds(1.0)), None),
                SECONDS as u64
            );
            g.bench_function("every_frame_in_process", |b| {
                b.iter(|| drain_with(linked, &clip, None, None))
            });
            g.bench_function("every_1s_key_frames_only_in_process", |b| {
                b.iter(|| drain_with(linked, &clip, Some(Seconds(1.0)), None))
            });
        }
        g.finish();
    }
}

criterion_group!(benches, bench);
criterion_main!(benches);
