//! The sensor and what happens to its numbers afterwards.
//!
//! A pixel collects photo-electrons with Poisson statistics (shot noise: variance equal to the
//! mean); it holds at most `full_well_e`; the read-out adds Gaussian read noise; the analogue gain
//! and the 8-bit converter map electrons to numbers, DN = black + gain (255 / full well) e, rounded
//! and clipped to 0..255 (the photon transfer model of common camera practice, e.g. the EMVA 1288
//! standard's linear model, cited from memory). Poisson draws are exact below 30 electrons and
//! Gaussian (mean n, variance n) above, where the two agree to well under a DN.
//!
//! Afterwards the frame may be stored as JPEG at a given quality (encoded and decoded back with the
//! `image` crate, so the blocking and ringing are those of a real encoder), and a sequence can be
//! written out as PNG or JPEG files.

use rand::Rng;
use rand_distr::{Distribution, Poisson, StandardNormal};
use std::path::Path;

#[derive(Debug, Clone)]
pub struct Sensor {
    pub full_well_e: f64,
    /// Analogue gain: 1 puts the full well at 255 DN.
    pub gain: f64,
    pub read_noise_e: f64,
    pub black_dn: f64,
    /// Add shot and read noise (off for noise-free checks of the model).
    pub noise: bool,
}

impl Default for Sensor {
    /// A small-pixel webcam sensor: 6000 e- full well, gain 1, 12 e- read noise, black at 4 DN.
    fn default() -> Self {
        Self {
            full_well_e: 6000.0,
            gain: 1.0,
            read_noise_e: 12.0,
            black_dn: 4.0,
            noise: true,
        }
    }
}

impl Sensor {
    /// DN per electron.
    pub fn dn_per_e(&self) -> f64 {
        self.gain * 255.0 / self.full_well_e
    }

    /// One pixel's number for an expected `mean_e` photo-electrons.
    pub fn read<R: Rng>(&self, mean_e: f64, rng: &mut R) -> u8 {
        let mean_e = mean_e.max(0.0);
        let mut e = if !self.noise {
            mean_e
        } else if mean_e < 30.0 {
            Poisson::new(mean_e.max(1e-9)).map_or(0.0, |p| p.sample(rng))
        } else {
            let z: f64 = rng.sample(StandardNormal);
            mean_e + mean_e.sqrt() * z
        };
        e = e.clamp(0.0, self.full_well_e);
        if self.noise {
            let z: f64 = rng.sample(StandardNormal);
            e += self.read_noise_e * z;
        }
        (self.black_dn + self.dn_per_e() * e)
            .round()
            .clamp(0.0, 255.0) as u8
    }
}

/// The 8-bit frame after a JPEG round trip at `quality` (1..100).
pub fn jpeg_round_trip(
    w: usize,
    h: usize,
    pixels: &[u8],
    quality: u8,
) -> Result<Vec<u8>, image::ImageError> {
    let mut buf = Vec::new();
    let mut enc = image::codecs::jpeg::JpegEncoder::new_with_quality(&mut buf, quality);
    enc.encode(pixels, w as u32, h as u32, image::ExtendedColorType::L8)?;
    let img = image::load_from_memory_with_format(&buf, image::ImageFormat::Jpeg)?;
    Ok(img.to_luma8().into_raw())
}

/// Write one 8-bit frame to `dir/frame_NNNNN.png` (quality None) or `.jpg` at the given quality.
pub fn write_frame(
    dir: &Path,
    index: usize,
    w: usize,
    h: usize,
    pixels: &[u8],
    jpeg_quality: Option<u8>,
) -> Result<std::path::PathBuf, image::ImageError> {
    std::fs::create_dir_all(dir).map_err(image::ImageError::IoError)?;
    match jpeg_quality {
        None => {
            let path = dir.join(format!("frame_{index:05}.png"));
            image::save_buffer(
                &path,
                pixels,
                w as u32,
                h as u32,
                image::ExtendedColorType::L8,
            )?;
            Ok(path)
        }
        Some(q) => {
            let path = dir.join(format!("frame_{index:05}.jpg"));
            let file = std::fs::File::create(&path).map_err(image::ImageError::IoError)?;
            let mut enc = image::codecs::jpeg::JpegEncoder::new_with_quality(
                std::io::BufWriter::new(file),
                q,
            );
            enc.encode(pixels, w as u32, h as u32, image::ExtendedColorType::L8)?;
            Ok(path)
        }
    }
}
