//! Evidence frames: every Nth frame of a run written as an 8-bit greyscale JPEG under `frames/`, with
//! `frames/times.csv` (`file,t_s`) so the folder is an image sequence that `spotlever track` can
//! process again with the run's times.
//!
//! Each image is written under a temporary name and renamed when complete, and its `times.csv` row is
//! written after that, so a kill never leaves a listed but half-written image.

use super::RecordError;
use crate::frame::{Pixels, Plane};
use crate::units::Seconds;
use image::codecs::jpeg::JpegEncoder;
use image::ExtendedColorType;
use std::fs::{self, File, OpenOptions};
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

/// Name of the times file inside `frames/`.
pub const TIMES_FILE: &str = "times.csv";
/// JPEG quality of kept frames: high enough that the spot's profile survives for re-tracking.
pub const JPEG_QUALITY: u8 = 92;

/// Writes every `every`-th frame.
pub struct FrameKeeper {
    dir: PathBuf,
    every: u64,
    times: File,
    kept: u64,
    bytes: Vec<u8>,
}

impl FrameKeeper {
    /// Keep frames whose number is a multiple of `every` (0 keeps none) in `dir`, creating it and
    /// appending to an existing `times.csv`.
    pub fn open(dir: &Path, every: u64) -> Result<Self, RecordError> {
        fs::create_dir_all(dir).map_err(RecordError::io(dir))?;
        let tp = dir.join(TIMES_FILE);
        let mut times = OpenOptions::new()
            .create(true)
            .append(true)
            .open(&tp)
            .map_err(RecordError::io(&tp))?;
        if times.metadata().map_err(RecordError::io(&tp))?.len() == 0 {
            times
                .write_all(b"file,t_s\n")
                .map_err(RecordError::io(&tp))?;
        }
        Ok(Self {
            dir: dir.to_path_buf(),
            every,
            times,
            kept: 0,
            bytes: Vec::new(),
        })
    }

    /// Whether frame number `frame` is one to keep.
    pub fn wants(&self, frame: u64) -> bool {
        self.every > 0 && frame % self.every == 0
    }

    /// Frames written so far by this keeper.
    pub fn kept(&self) -> u64 {
        self.kept
    }

    /// File name used for frame number `frame`.
    pub fn file_name(frame: u64) -> String {
        format!("frame_{frame:09}.jpg")
    }

    /// Write `plane` as frame number `frame` at time `t` if it is one to keep.
    pub fn offer(&mut self, frame: u64, t: Seconds, plane: &Plane) -> Result<bool, RecordError> {
        if !self.wants(frame) {
            return Ok(false);
        }
        let name = Self::file_name(frame);
        let path = self.dir.join(&name);
        let part = self.dir.join(format!("{name}.part"));
        to_u8(plane, &mut self.bytes);
        {
            let file = File::create(&part).map_err(RecordError::io(&part))?;
            let mut out = BufWriter::new(file);
            JpegEncoder::new_with_quality(&mut out, JPEG_QUALITY)
                .encode(
                    &self.bytes,
                    plane.width() as u32,
                    plane.height() as u32,
                    ExtendedColorType::L8,
                )
                .map_err(|e| RecordError::Jpeg {
                    path: path.clone(),
                    message: e.to_string(),
                })?;
            out.flush().map_err(RecordError::io(&part))?;
        }
        fs::rename(&part, &path).map_err(RecordError::io(&path))?;
        let row = format!("{name},{:.6}\n", t.0);
        let tp = self.dir.join(TIMES_FILE);
        self.times
            .write_all(row.as_bytes())
            .map_err(RecordError::io(&tp))?;
        self.kept += 1;
        Ok(true)
    }
}

/// The plane as 8-bit values (scaled when its white level is not 255), into a reused buffer.
fn to_u8(plane: &Plane, out: &mut Vec<u8>) {
    out.clear();
    out.reserve(plane.width() * plane.height());
    let white = plane.white.max(1) as u32;
    match plane.pixels() {
        Pixels::Eight(a) if white == 255 => out.extend(a.iter()),
        _ if white == 255 => out.extend(plane.values().map(|v| v.min(255) as u8)),
        _ => out.extend(
            plane
                .values()
                .map(|v| ((v.min(white as u16) as u32 * 255 + white / 2) / white) as u8),
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::Array2;

    #[test]
    fn keeps_every_nth_with_times_and_readable_images() {
        let dir = tempfile::tempdir().unwrap();
        let fd = dir.path().join("frames");
        let mut k = FrameKeeper::open(&fd, 3).unwrap();
        let plane = Plane::new(
            Array2::from_shape_fn((8, 16), |(y, x)| (x * 16 + y) as u16),
            255,
        );
        for f in 0..7u64 {
            k.offer(f, Seconds(f as f64 * 0.5), &plane).unwrap();
        }
        assert_eq!(k.kept(), 3);
        let times = fs::read_to_string(fd.join(TIMES_FILE)).unwrap();
        assert_eq!(
            times,
            "file,t_s\nframe_000000000.jpg,0.000000\nframe_000000003.jpg,1.500000\nframe_000000006.jpg,3.000000\n"
        );
        let img = image::open(fd.join("frame_000000003.jpg"))
            .unwrap()
            .to_luma8();
        assert_eq!((img.width(), img.height()), (16, 8));
        // JPEG is lossy; a smooth ramp comes back within a few DN at this quality.
        let worst = img
            .enumerate_pixels()
            .map(|(x, y, p)| (p.0[0] as i32 - (x * 16 + y) as i32).abs())
            .max()
            .unwrap();
        assert!(worst <= 8, "{worst}");
        assert!(fs::read_dir(&fd).unwrap().all(|e| !e
            .unwrap()
            .file_name()
            .to_string_lossy()
            .ends_with(".part")));
        // Reopening appends without a second header.
        drop(k);
        let mut k = FrameKeeper::open(&fd, 3).unwrap();
        k.offer(9, Seconds(4.5), &plane).unwrap();
        let times = fs::read_to_string(fd.join(TIMES_FILE)).unwrap();
        assert_eq!(times.matches("file,t_s").count(), 1);
        assert!(times.ends_with("frame_000000009.jpg,4.500000\n"));
    }

    #[test]
    fn sixteen_bit_planes_are_scaled() {
        let mut out = Vec::new();
        let p = Plane::new(Array2::from_elem((1, 3), 0u16), 4095);
        to_u8(&p, &mut out);
        assert_eq!(out, vec![0, 0, 0]);
        let p = Plane::new(
            Array2::from_shape_vec((1, 3), vec![0, 2048, 4095]).unwrap(),
            4095,
        );
        to_u8(&p, &mut out);
        assert_eq!(out, vec![0, 128, 255]);
    }

    #[test]
    fn eight_bit_planes_are_copied_as_they_are() {
        let mut out = vec![9; 10];
        to_u8(&Plane::from_u8(3, 1, &[0, 77, 255]), &mut out);
        assert_eq!(out, vec![0, 77, 255]);
    }
}
