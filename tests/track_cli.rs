//! `spotlever track` end to end: the track file, the summary, and every bad input with a clear
//! message, a non-zero exit and no panic.

mod support;

use spotlever::spot::SpotStatus;
use spotlever::track::read_track;
use std::path::Path;
use support::cli::{bin, run, Ran};
use support::*;

/// Run `spotlever track`; `path_env` replaces PATH (`Some("")`: no ffmpeg program, and in a build
/// with ffmpeg's libraries linked in, those are set aside too by asking for the built-in reader).
fn track(args: &[&str], path_env: Option<&str>) -> Ran {
    let mut c = bin();
    c.arg("track").args(args);
    if let Some(p) = path_env {
        c.env("PATH", p);
        if p.is_empty() && spotlever::source::LINKED_FFMPEG {
            c.args(["--decoder", "builtin"]);
        }
    }
    run(&mut c)
}

fn s(p: &Path) -> String {
    p.to_string_lossy().into_owned()
}

#[test]
fn tracks_a_sequence_and_writes_flushed_rows() {
    let d = tempfile::tempdir().unwrap();
    let frames = d.path().join("f");
    let truth = write_png_frames(&frames, 10, 96, 72);
    write_times(&frames, 10, 2.0);
    let out = d.path().join("track.csv");
    let o = track(&[&s(&frames), "--out", &s(&out)], None);
    assert!(o.ok(), "{}", o.stderr);
    assert!(o.stderr.contains("10 frames"), "{}", o.stderr);
    let t = read_track(&out).unwrap();
    assert_eq!(t.rows.len(), 10);
    for (r, (cx, cy)) in t.rows.iter().zip(&truth) {
        let p = r.fix.position.expect("found");
        // Spot finder accuracy is tested against the Cramér–Rao bound elsewhere; here only that
        // the right frame reached the row: within 0.5 px of the rendered centre.
        assert!(
            (p.x - cx).abs() < 0.5 && (p.y - cy).abs() < 0.5,
            "{p:?} vs {cx},{cy}"
        );
        assert_eq!(r.t.0, r.frame as f64 / 2.0);
    }
}

#[test]
fn corrupt_image_gives_unreadable_row_and_is_counted() {
    let d = tempfile::tempdir().unwrap();
    write_png_frames(d.path(), 6, 64, 48);
    std::fs::write(d.path().join("img2.png"), b"\x89PNG broken").unwrap();
    let out = d.path().join("t.csv");
    let o = track(&[&s(d.path()), "--fps", "5", "--out", &s(&out)], None);
    assert!(o.ok(), "{}", o.stderr);
    let e = o.stderr;
    assert!(e.contains("1 unreadable") && e.contains("img2.png"), "{e}");
    let t = read_track(&out).unwrap();
    assert_eq!(t.rows.len(), 6);
    assert_eq!(t.rows[2].fix.status, SpotStatus::Unreadable);
    assert!(t.rows[3].fix.position.is_some());
}

#[test]
fn bad_inputs_fail_clearly() {
    let d = tempfile::tempdir().unwrap();
    let out = s(&d.path().join("t.csv"));
    track(&[&s(&d.path().join("missing")), "--out", &out], None)
        .fails_with(&["missing", "no such file"]);
    let empty = d.path().join("empty");
    std::fs::create_dir(&empty).unwrap();
    track(&[&s(&empty), "--fps", "1", "--out", &out], None).fails_with(&["empty", "no PNG"]);

    let f = d.path().join("f");
    write_png_frames(&f, 4, 64, 48);
    track(&[&s(&f), "--out", &out], None).fails_with(&["--times", "--fps"]);
    track(
        &[&s(&f), "--fps", "1", "--roi", "40,10,30,10", "--out", &out],
        None,
    )
    .fails_with(&["--roi 40,10,30,10", "64x48"]);
    track(
        &[&s(&f), "--fps", "1", "--roi", "1,2,3", "--out", &out],
        None,
    )
    .fails_with(&["X,Y,W,H"]);
    std::fs::write(
        f.join("times.csv"),
        "file,t_s\nimg0.png,0\nimg1.png,-1\nimg2.png,2\nimg3.png,3\n",
    )
    .unwrap();
    track(&[&s(&f), "--out", &out], None).fails_with(&["times.csv, line 3"]);
    std::fs::write(f.join("times.csv"), "file;t_s\n").unwrap();
    track(&[&s(&f), "--out", &out], None).fails_with(&["times.csv, line 1"]);
    std::fs::remove_file(f.join("times.csv")).unwrap();
    image::GrayImage::new(50, 48)
        .save(f.join("img1.png"))
        .unwrap();
    track(&[&s(&f), "--fps", "1", "--out", &out], None).fails_with(&["img1.png", "50x48", "64x48"]);
}

#[test]
fn truncated_video_keeps_rows_and_says_where_it_stopped() {
    let d = tempfile::tempdir().unwrap();
    let clip = cut_clip(d.path());
    let out = d.path().join("t.csv");
    let mut runs = vec![("builtin", None)];
    if ffmpeg_or_skip("truncated_video_keeps_rows_and_says_where_it_stopped (ffmpeg part)") {
        runs.push(("ffmpeg", None));
    }
    for (decoder, path) in runs {
        let o = track(&[&s(&clip), "--decoder", decoder, "--out", &s(&out)], path);
        o.fails_with(&["cut.mp4", "decoding stopped after", "truncated"]);
        let rows = read_track(&out).unwrap().rows;
        assert!(
            rows.len() >= 5 && rows.len() < 30,
            "{decoder}: {} rows",
            rows.len()
        );
        assert!(
            o.stderr.contains(&format!("{} frames", rows.len())),
            "{}",
            o.stderr
        );
    }
}

#[test]
fn truncated_video_read_by_key_frames_only_says_where_it_stopped() {
    if !ffmpeg_or_skip("truncated_video_read_by_key_frames_only_says_where_it_stopped") {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    let clip = cut_clip(d.path());
    let out = d.path().join("t.csv");
    // Key frames at frames 0, 16 and 29 of 30 at 10 fps: one every 1.6 s interval, so only key
    // frames are decoded, and those never reach the missing tail; the file's index must tell.
    let o = track(
        &[
            &s(&clip),
            "--decoder",
            "ffmpeg",
            "--every",
            "1.6",
            "--out",
            &s(&out),
        ],
        None,
    );
    o.fails_with(&["cut.mp4", "truncated", "index lists 30 frames"]);
    assert!(o.stderr.contains("key frames only"), "{}", o.stderr);
    let rows = read_track(&out).unwrap().rows;
    assert!(!rows.is_empty() && rows.len() <= 2, "{} rows", rows.len());
}

#[test]
fn without_ffmpeg_the_builtin_reader_is_used_and_refuses_what_it_cannot_decode() {
    let d = tempfile::tempdir().unwrap();
    let out = s(&d.path().join("t.csv"));
    // An empty PATH: no ffmpeg, so the committed Baseline clip goes through the built-in reader.
    let o = track(&[&s(&committed_clip()), "--out", &out], Some(""));
    assert!(o.ok(), "{}", o.stderr);
    assert!(o.stderr.contains("built-in decoder"), "{}", o.stderr);
    assert_eq!(read_track(Path::new(&out)).unwrap().rows.len(), 30);

    if !ffmpeg_or_skip("without_ffmpeg_... (clips made by ffmpeg)") {
        return;
    }
    let f = d.path().join("f");
    write_png_frames(&f, 12, 64, 48);
    let bframes = d.path().join("b.mp4");
    encode_pngs(
        &f,
        10,
        &["-c:v", "libx264", "-pix_fmt", "yuv420p"],
        &bframes,
    );
    track(&[&s(&bframes), "--out", &out], Some(""))
        .fails_with(&["B-frames", "install the ffmpeg program"]);
    let avi = d.path().join("cam.avi");
    encode_pngs(&f, 10, &["-c:v", "mjpeg", "-pix_fmt", "yuvj420p"], &avi);
    track(&[&s(&avi), "--out", &out], Some("")).fails_with(&[
        "AVI",
        "MJPG",
        "install the ffmpeg program",
    ]);
    let hevc = d.path().join("phone.mp4");
    encode_pngs(
        &f,
        10,
        &[
            "-c:v",
            "libx265",
            "-pix_fmt",
            "yuv420p",
            "-x265-params",
            "log-level=error",
        ],
        &hevc,
    );
    track(&[&s(&hevc), "--out", &out], Some(""))
        .fails_with(&["HEVC", "install the ffmpeg program"]);
    // And with ffmpeg the same files are read.
    for clip in [&bframes, &avi, &hevc] {
        let o = track(&[&s(clip), "--out", &out], None);
        assert!(o.ok(), "{}: {}", clip.display(), o.stderr);
        assert_eq!(
            read_track(Path::new(&out)).unwrap().rows.len(),
            12,
            "{}",
            clip.display()
        );
    }
}

#[test]
fn not_a_video_is_refused_with_the_reason() {
    let d = tempfile::tempdir().unwrap();
    let junk = d.path().join("junk.mp4");
    std::fs::write(&junk, vec![7u8; 5000]).unwrap();
    let out = s(&d.path().join("t.csv"));
    track(&[&s(&junk), "--decoder", "builtin", "--out", &out], None)
        .fails_with(&["junk.mp4", "install the ffmpeg program"]);
    if ffmpeg_or_skip("not_a_video_is_refused_with_the_reason (ffmpeg part)") {
        track(&[&s(&junk), "--out", &out], None).fails_with(&["junk.mp4", "cannot read it"]);
    }
}

fn scale_calibration(path: &Path, width: u32, height: u32) {
    use nalgebra::Matrix3;
    // x_mm = 0.5 x_px - 10, y_mm = 0.5 y_px + 3: an affine homography.
    let h = Matrix3::new(0.5, 0.0, -10.0, 0.0, 0.5, 3.0, 0.0, 0.0, 1.0);
    let c = spotlever::calib::Calibration {
        image_width: width,
        image_height: height,
        h,
        h_inv: h.try_inverse().expect("invertible"),
        rms_px: 0.0,
        rms_mm: 0.0,
        points: 4,
        source_image: "grid.png".into(),
        created: "2026-01-01T00:00:00Z".into(),
        notes: String::new(),
    };
    c.save(path).expect("save calibration");
}

#[test]
fn calibration_adds_screen_millimetres_and_must_match_the_image_size() {
    let d = tempfile::tempdir().unwrap();
    let f = d.path().join("f");
    write_png_frames(&f, 4, 64, 48);
    let good = d.path().join("good.toml");
    scale_calibration(&good, 64, 48);
    let out = d.path().join("t.csv");
    let o = track(
        &[
            &s(&f),
            "--fps",
            "1",
            "--calib",
            &s(&good),
            "--out",
            &s(&out),
        ],
        None,
    );
    assert!(o.ok(), "{}", o.stderr);
    let t = read_track(&out).unwrap();
    assert!(t.has_mm);
    for r in &t.rows {
        let (p, m) = (r.fix.position.unwrap(), r.screen.unwrap());
        // The file keeps 4 decimals of px and 5 of mm.
        assert!((m.x_mm - (0.5 * p.x - 10.0)).abs() < 1e-4, "{p:?} {m:?}");
        assert!((m.y_mm - (0.5 * p.y + 3.0)).abs() < 1e-4, "{p:?} {m:?}");
    }
    let other = d.path().join("other.toml");
    scale_calibration(&other, 1920, 1080);
    let o = track(
        &[
            &s(&f),
            "--fps",
            "1",
            "--calib",
            &s(&other),
            "--out",
            &s(&out),
        ],
        None,
    );
    o.fails_with(&["other.toml", "1920"]);
}
