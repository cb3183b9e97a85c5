//! Cutting video pictures to a rectangle inside ffmpeg (`OpenOptions::crop`, `track --roi`): the
//! planes that arrive are exactly that rectangle of the whole pictures, for each way pictures travel
//! (the decoder's luma plane, ffmpeg's gray conversion, packed RGB), and tracking them gives the same
//! positions, in the whole picture's pixels, as looking inside the same ROI of whole pictures.

mod support;

use spotlever::frame::{Channel, Frame, Roi};
use spotlever::source::{open, OpenOptions, SourceError, VideoDecoder};
use spotlever::spot::{SpotConfig, Tracker};
use spotlever::track::{run_tracker, ScreenMap};
use std::path::Path;
use support::cli::bin;
use support::*;

const W: usize = 160;
const H: usize = 120;
const N: usize = 12;

/// Odd offsets on purpose: 4:2:0 chroma is subsampled by two, and the cut must still be exact.
const RECT: Roi = Roi {
    x: 37,
    y: 23,
    width: 75,
    height: 51,
};

fn opts(channel: Channel, crop: Option<Roi>) -> OpenOptions {
    OpenOptions {
        decoder: VideoDecoder::Ffmpeg,
        channel,
        crop,
        ..OpenOptions::default()
    }
}

/// A clip of the test frames encoded with `args`.
fn clip(dir: &Path, name: &str, args: &[&str]) -> std::path::PathBuf {
    frames_clip(dir, N, (W, H), name, args)
}

/// Each cropped plane against the same rectangle of the uncropped plane, pixel by pixel.
fn assert_cut_exactly(path: &Path, channel: Channel) {
    let (whole, e1) = frames_of(path, &opts(channel, None));
    let (cut, e2) = frames_of(path, &opts(channel, Some(RECT)));
    assert!(e1.is_none() && e2.is_none(), "{e1:?} {e2:?}");
    assert_eq!(whole.len(), N, "{}: frames read whole", path.display());
    assert_eq!(cut.len(), N, "{}: frames read cut", path.display());
    for (a, b) in whole.iter().zip(&cut) {
        assert_eq!((a.index, a.t), (b.index, b.t), "frame numbering and times");
        assert_eq!(
            (b.plane.width(), b.plane.height()),
            (RECT.width, RECT.height),
            "size of a cut plane"
        );
        assert_eq!(a.plane.white, b.plane.white);
        for y in 0..RECT.height {
            for x in 0..RECT.width {
                assert_eq!(
                    b.plane.get(x, y),
                    a.plane.get(x + RECT.x, y + RECT.y),
                    "{}: pixel ({x}, {y}) of the cut plane, frame {}",
                    path.display(),
                    a.index
                );
            }
        }
    }
}

#[test]
fn a_cut_plane_is_exactly_that_rectangle_of_the_whole_picture() {
    if !ffmpeg_or_skip("a_cut_plane_is_exactly_that_rectangle_of_the_whole_picture") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    // 8-bit 4:2:0: the decoder's luma plane is sent as decoded.
    let yuv = clip(
        d.path(),
        "yuv.mp4",
        &["-c:v", "libx264", "-pix_fmt", "yuv420p"],
    );
    assert_cut_exactly(&yuv, Channel::Luma);
    // Packed RGB, one channel taken here.
    assert_cut_exactly(&yuv, Channel::Red);
    // A format whose first plane is not luma: ffmpeg converts to gray before the cut.
    let rgb = clip(d.path(), "rgb.mkv", &["-c:v", "ffv1", "-pix_fmt", "bgr0"]);
    assert_cut_exactly(&rgb, Channel::Luma);
}

#[test]
fn the_source_says_what_it_cut_and_leaves_a_rectangle_that_does_not_fit() {
    if !ffmpeg_or_skip("the_source_says_what_it_cut_and_leaves_a_rectangle_that_does_not_fit") {
        return;
    }
    let clip = committed_clip();
    let src = open(&clip, &opts(Channel::Luma, Some(RECT))).unwrap();
    assert_eq!(src.info().crop, Some(RECT));
    // The whole picture's size stays what the source reports (calibrations are checked against it).
    assert_eq!((src.info().width, src.info().height), (W, H));
    assert!(
        src.info()
            .description
            .contains("75x51 rectangle at (37, 23)"),
        "{}",
        src.info().description
    );
    let too_wide = Roi {
        x: 100,
        width: 61,
        ..RECT
    };
    let src = open(&clip, &opts(Channel::Luma, Some(too_wide))).unwrap();
    assert_eq!(src.info().crop, None);
    // The built-in reader does not cut: it delivers whole pictures and says so.
    let builtin = OpenOptions {
        decoder: VideoDecoder::Builtin,
        ..opts(Channel::Luma, Some(RECT))
    };
    let src = open(&clip, &builtin).unwrap();
    assert_eq!(src.info().crop, None);
}

/// Positions of a whole run, in the whole picture's pixels.
fn run(path: &Path, crop: Option<Roi>, finder_roi: Option<Roi>) -> Vec<(f64, f64)> {
    let mut src = open(path, &opts(Channel::Luma, crop)).unwrap();
    let mut tracker = Tracker::new(SpotConfig {
        roi: finder_roi,
        ..SpotConfig::default()
    });
    let mut out = Vec::new();
    run_tracker::<SourceError>(
        src.as_mut(),
        &mut tracker,
        &ScreenMap::none(),
        |row, _: Option<&Frame>| {
            let p = row
                .fix
                .position
                .expect("the test spot stays inside the rectangle");
            out.push((p.x, p.y));
            Ok(())
        },
        |_| {},
    )
    .unwrap();
    out
}

#[test]
fn tracking_cut_pictures_gives_the_positions_of_the_same_roi_in_whole_ones() {
    if !ffmpeg_or_skip("tracking_cut_pictures_gives_the_positions_of_the_same_roi_in_whole_ones") {
        return;
    }
    let clip = committed_clip();
    // A rectangle the committed clip's spot (30 frames along path_centre's path) never comes near
    // the edge of.
    let roi = Roi {
        x: 20,
        y: 15,
        width: 121,
        height: 91,
    };
    for i in 0..30 {
        let (cx, cy) = path_centre(i, W, H);
        assert!(
            cx > (roi.x + 12) as f64 && cx < (roi.x + roi.width - 12) as f64,
            "test set-up"
        );
        assert!(
            cy > (roi.y + 12) as f64 && cy < (roi.y + roi.height - 12) as f64,
            "test set-up"
        );
    }
    let inside = run(&clip, None, Some(roi));
    let cut = run(&clip, Some(roi), None);
    assert_eq!((inside.len(), cut.len()), (30, 30));
    // The same pixels with every coordinate moved by whole pixels: the only difference is rounding
    // in the last bits of coordinates some hundred pixels from the origin (1e-9 px is about 1e6
    // times the spacing of doubles near 160, and 1e-8 of the spot's own noise-limited precision).
    for (k, (a, b)) in inside.iter().zip(&cut).enumerate() {
        assert!(
            (a.0 - b.0).abs() < 1e-9 && (a.1 - b.1).abs() < 1e-9,
            "frame {k}: ROI in whole pictures {a:?}, cut pictures {b:?}"
        );
    }
}

#[test]
fn track_with_roi_cuts_in_ffmpeg_and_writes_whole_picture_pixels() {
    if !ffmpeg_or_skip("track_with_roi_cuts_in_ffmpeg_and_writes_whole_picture_pixels") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    let clip = committed_clip();
    let out = |name: &str, decoder: &str| {
        let csv = d.path().join(name);
        let o = support::cli::run(
            bin()
                .arg("track")
                .arg(&clip)
                .args(["--roi", "20,15,121,91", "--decoder", decoder, "--out"])
                .arg(&csv),
        );
        assert!(o.ok(), "{}", o.stderr);
        (std::fs::read_to_string(&csv).unwrap(), o.stderr)
    };
    let (cut, said) = out("cut.csv", "ffmpeg");
    assert!(said.contains("121x91 rectangle at (20, 15)"), "{said}");
    // The built-in reader decodes whole pictures and the finder keeps to the ROI; both decoders
    // give the same luma (H.264 decoding is bit-exact), so the written positions agree.
    let (whole, _) = out("whole.csv", "builtin");
    let xy = |text: &str| -> Vec<(f64, f64)> {
        text.lines()
            .skip(1)
            .map(|l| {
                let v: Vec<&str> = l.split(',').collect();
                (v[2].parse().unwrap(), v[3].parse().unwrap())
            })
            .collect()
    };
    let (a, b) = (xy(&cut), xy(&whole));
    assert_eq!(a.len(), b.len());
    assert!(!a.is_empty());
    for (p, q) in a.iter().zip(&b) {
        // The track file keeps four decimals.
        assert!(
            (p.0 - q.0).abs() <= 1e-4 && (p.1 - q.1).abs() <= 1e-4,
            "{p:?} {q:?}"
        );
    }
}
