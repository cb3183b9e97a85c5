//! Image-sequence reading: natural order, times from times.csv or --fps, thinning, channels, and
//! every bad input with the message it must give.

mod support;

use spotlever::frame::Channel;
use spotlever::source::{open, Delivery, OpenOptions};
use spotlever::units::Seconds;
use std::path::Path;
use support::*;

fn deliveries(dir: &Path, opts: &OpenOptions) -> Vec<Delivery> {
    let mut s = open(dir, opts).expect("open");
    let mut v = Vec::new();
    while let Some(d) = s.next_delivery() {
        v.push(d.expect("no fatal error"));
    }
    v
}

fn err(path: &Path, opts: &OpenOptions) -> String {
    match open(path, opts) {
        Ok(_) => panic!("{} should not open", path.display()),
        Err(e) => e.to_string(),
    }
}

#[test]
fn natural_order_and_times_csv() {
    let d = tempfile::tempdir().unwrap();
    let truth = write_png_frames(d.path(), 12, 64, 48);
    write_times(d.path(), 12, 4.0);
    let v = deliveries(d.path(), &OpenOptions::default());
    assert_eq!(v.len(), 12);
    for (i, dl) in v.iter().enumerate() {
        let Delivery::Frame(f) = dl else {
            panic!("frame {i} unreadable")
        };
        assert_eq!(f.index, i as u64);
        assert!(f.origin.ends_with(&format!("img{i}.png")), "{}", f.origin);
        assert_eq!(f.t, Seconds(i as f64 / 4.0));
    }
    // The frames really are the rendered ones: the spot's peak sits at the rendered centre.
    let Delivery::Frame(f) = &v[10] else {
        unreachable!()
    };
    let (cx, cy) = truth[10];
    let p = f
        .plane
        .get(cx.round() as usize, cy.round() as usize)
        .unwrap();
    assert!(p > 150, "peak {p}");
}

#[test]
fn fps_when_no_times_file_and_error_when_neither() {
    let d = tempfile::tempdir().unwrap();
    write_png_frames(d.path(), 3, 32, 24);
    let e = err(d.path(), &OpenOptions::default());
    assert!(e.contains("--times") && e.contains("--fps"), "{e}");
    let v = deliveries(
        d.path(),
        &OpenOptions {
            fps: Some(2.0),
            ..Default::default()
        },
    );
    let Delivery::Frame(f) = &v[2] else { panic!() };
    assert_eq!(f.t, Seconds(1.0));
}

#[test]
fn glob_pattern_selects_files() {
    let d = tempfile::tempdir().unwrap();
    write_png_frames(d.path(), 5, 32, 24);
    std::fs::write(d.path().join("notes.txt"), "x").unwrap();
    let pattern = d.path().join("img*.png");
    let v = deliveries(
        &pattern,
        &OpenOptions {
            fps: Some(1.0),
            ..Default::default()
        },
    );
    assert_eq!(v.len(), 5);
}

#[test]
fn every_keeps_one_frame_per_interval_without_decoding_the_rest() {
    let d = tempfile::tempdir().unwrap();
    write_png_frames(d.path(), 20, 32, 24);
    // Corrupt a frame that --every 1 skips: it must not matter.
    std::fs::write(d.path().join("img5.png"), b"not a png").unwrap();
    let o = OpenOptions {
        fps: Some(4.0),
        every: Some(Seconds(1.0)),
        ..Default::default()
    };
    let idx: Vec<u64> = deliveries(d.path(), &o)
        .iter()
        .map(|d| match d {
            Delivery::Frame(f) => f.index,
            Delivery::Unreadable { index, .. } => panic!("frame {index} should be skipped"),
        })
        .collect();
    assert_eq!(idx, [0, 4, 8, 12, 16]);
}

#[test]
fn red_channel_of_a_colour_image() {
    let d = tempfile::tempdir().unwrap();
    let mut img = image::RgbImage::new(8, 8);
    for p in img.pixels_mut() {
        *p = image::Rgb([200, 50, 10]);
    }
    img.save(d.path().join("a.png")).unwrap();
    let get = |c| {
        let v = deliveries(
            d.path(),
            &OpenOptions {
                fps: Some(1.0),
                channel: c,
                ..Default::default()
            },
        );
        let Delivery::Frame(f) = &v[0] else { panic!() };
        f.plane.get(3, 3).unwrap()
    };
    assert_eq!(get(Channel::Red), 200);
    assert_eq!(get(Channel::Green), 50);
    assert_eq!(get(Channel::Blue), 10);
    // ITU-R BT.601 luma: 0.299*200 + 0.587*50 + 0.114*10 = 89.84.
    assert_eq!(get(Channel::Luma), 90);
}

#[test]
fn corrupt_image_in_the_middle_is_unreadable_and_the_run_goes_on() {
    let d = tempfile::tempdir().unwrap();
    write_png_frames(d.path(), 6, 32, 24);
    let bytes = std::fs::read(d.path().join("img3.png")).unwrap();
    std::fs::write(d.path().join("img3.png"), &bytes[..bytes.len() / 2]).unwrap();
    let v = deliveries(
        d.path(),
        &OpenOptions {
            fps: Some(1.0),
            ..Default::default()
        },
    );
    assert_eq!(v.len(), 6);
    match &v[3] {
        Delivery::Unreadable { index, origin, .. } => {
            assert_eq!(*index, 3);
            assert!(origin.ends_with("img3.png"));
        }
        _ => panic!("img3 should be unreadable"),
    }
    assert!(matches!(v[4], Delivery::Frame(_)));
}

#[test]
fn mixed_sizes_name_the_first_offending_file() {
    let d = tempfile::tempdir().unwrap();
    write_png_frames(d.path(), 4, 32, 24);
    image::GrayImage::new(30, 24)
        .save(d.path().join("img2.png"))
        .unwrap();
    image::GrayImage::new(31, 24)
        .save(d.path().join("img3.png"))
        .unwrap();
    let e = err(
        d.path(),
        &OpenOptions {
            fps: Some(1.0),
            ..Default::default()
        },
    );
    assert!(
        e.contains("img2.png") && e.contains("30x24") && e.contains("32x24"),
        "{e}"
    );
}

#[test]
fn bad_times_files_name_the_line() {
    let d = tempfile::tempdir().unwrap();
    write_png_frames(d.path(), 3, 32, 24);
    std::fs::write(
        d.path().join("times.csv"),
        "file,t_s\nimg0.png,0\nimg1.png,1\nimg2.png,0.5\n",
    )
    .unwrap();
    let e = err(d.path(), &OpenOptions::default());
    assert!(e.contains("times.csv, line 4"), "{e}");
    std::fs::write(
        d.path().join("times.csv"),
        "file,t_s\nimg0.png,0\nimg1.png,1s\nimg2.png,2\n",
    )
    .unwrap();
    let e = err(d.path(), &OpenOptions::default());
    assert!(e.contains("line 3") && e.contains("1s"), "{e}");
    // Increasing by row, but against file-name order.
    std::fs::write(
        d.path().join("times.csv"),
        "file,t_s\nimg1.png,0\nimg0.png,1\nimg2.png,2\n",
    )
    .unwrap();
    let e = err(d.path(), &OpenOptions::default());
    assert!(e.contains("line 2") && e.contains("img1.png"), "{e}");
    std::fs::write(
        d.path().join("times.csv"),
        "file,t_s\nimg0.png,0\nimg1.png,1\n",
    )
    .unwrap();
    let e = err(d.path(), &OpenOptions::default());
    assert!(e.contains("no time for img2.png"), "{e}");
}

#[test]
fn missing_path_and_empty_folder() {
    let d = tempfile::tempdir().unwrap();
    let e = err(&d.path().join("nope"), &OpenOptions::default());
    assert!(e.contains("no such file or folder"), "{e}");
    let e = err(d.path(), &OpenOptions::default());
    assert!(e.contains("no PNG, JPEG, TIFF or BMP images"), "{e}");
    let e = err(&d.path().join("*.png"), &OpenOptions::default());
    assert!(e.contains("no such file"), "{e}");
}
