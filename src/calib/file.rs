//! The calibration file: a TOML document of our own schema, with a format version, so a calibration is
//! made once per setup and reused for every run.
//!
//! ```toml
//! format = "spotlever-screen-calibration"
//! version = 1
//! created = "2026-12-01T23:50:00Z"
//! source_image = "screen.png"
//! notes = ""
//!
//! [image]          # size of the images it is valid for, px
//! width = 1280
//! height = 720
//!
//! [fit]            # quality of the fit over the points used
//! points = 48
//! rms_px = 0.12
//! rms_mm = 0.011
//!
//! [mapping]        # row-major 3x3 homographies on homogeneous coordinates
//! pixel_to_mm = [[...], [...], [...]]
//! mm_to_pixel = [[...], [...], [...]]
//! ```

use super::{CalibError, Calibration};
use crate::outfile::Kind;
use nalgebra::Matrix3;
use serde::{Deserialize, Serialize};
use std::io::Write;
use std::path::Path;

/// Identifies a calibration file.
pub const FORMAT_NAME: &str = "spotlever-screen-calibration";
/// What a calibration file is, for the check of a file it would replace.
pub const CALIBRATION_KIND: Kind = Kind::Text {
    what: "a screen calibration",
    mark: FORMAT_NAME,
};
/// The schema version this build writes and reads.
pub const FORMAT_VERSION: u32 = 1;

#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct FileDoc {
    format: String,
    version: u32,
    created: String,
    source_image: String,
    #[serde(default)]
    notes: String,
    image: ImageSection,
    fit: FitSection,
    mapping: MappingSection,
}

#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct ImageSection {
    width: u32,
    height: u32,
}

#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct FitSection {
    points: usize,
    rms_px: f64,
    rms_mm: f64,
}

#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct MappingSection {
    pixel_to_mm: [[f64; 3]; 3],
    mm_to_pixel: [[f64; 3]; 3],
}

/// Only the version, read first so a newer file gets a version message rather than a field error.
#[derive(Debug, Deserialize)]
struct VersionProbe {
    format: Option<String>,
    version: Option<u32>,
}

fn rows(m: &Matrix3<f64>) -> [[f64; 3]; 3] {
    let mut r = [[0.0; 3]; 3];
    for (i, row) in r.iter_mut().enumerate() {
        for (j, v) in row.iter_mut().enumerate() {
            *v = m[(i, j)];
        }
    }
    r
}

fn matrix(r: &[[f64; 3]; 3]) -> Matrix3<f64> {
    Matrix3::from_fn(|i, j| r[i][j])
}

/// 1-based line of a byte offset in `text`.
fn line_of(text: &str, offset: usize) -> usize {
    text.as_bytes()[..offset.min(text.len())]
        .iter()
        .filter(|&&b| b == b'\n')
        .count()
        + 1
}

fn syntax(path: &Path, text: &str, e: toml::de::Error) -> CalibError {
    CalibError::Syntax {
        path: path.to_path_buf(),
        line: e.span().map(|s| line_of(text, s.start)).unwrap_or(0),
        message: format!(
            "{} (is this a calibration file written by `spotlever calibrate`?)",
            e.message().trim()
        ),
    }
}

impl Calibration {
    /// Read a calibration file, checking its format, version and that the two matrices are finite,
    /// invertible and inverse to each other.
    pub fn load(path: &Path) -> Result<Calibration, CalibError> {
        let text = crate::textfile::read_text(path).map_err(|e| CalibError::Read {
            path: e.path,
            source: e.source,
        })?;
        Self::from_toml(&text, path)
    }

    /// Parse the text of a calibration file; `path` is only used in messages.
    pub fn from_toml(text: &str, path: &Path) -> Result<Calibration, CalibError> {
        let invalid = |message: String| CalibError::Invalid {
            path: path.to_path_buf(),
            message,
        };
        let probe: VersionProbe = toml::from_str(text).map_err(|e| syntax(path, text, e))?;
        if probe.format.as_deref() != Some(FORMAT_NAME) {
            return Err(invalid(format!(
                "not a screen calibration (expected `format = \"{FORMAT_NAME}\"` at the top); \
                 make one with `spotlever calibrate`"
            )));
        }
        match probe.version {
            Some(FORMAT_VERSION) => {}
            Some(found) => {
                return Err(CalibError::Version {
                    path: path.to_path_buf(),
                    found,
                    supported: FORMAT_VERSION,
                })
            }
            None => return Err(invalid("missing `version`".into())),
        }
        let doc: FileDoc = toml::from_str(text).map_err(|e| syntax(path, text, e))?;
        if doc.image.width == 0 || doc.image.height == 0 {
            return Err(invalid(format!(
                "image size {}x{} is empty",
                doc.image.width, doc.image.height
            )));
        }
        let h = matrix(&doc.mapping.pixel_to_mm);
        let h_inv = matrix(&doc.mapping.mm_to_pixel);
        check_pair(&h, &h_inv).map_err(invalid)?;
        for (name, v) in [
            ("fit.rms_px", doc.fit.rms_px),
            ("fit.rms_mm", doc.fit.rms_mm),
        ] {
            if !(v.is_finite() && v >= 0.0) {
                return Err(invalid(format!(
                    "{name} = {v} is not a non-negative number"
                )));
            }
        }
        Ok(Calibration {
            image_width: doc.image.width,
            image_height: doc.image.height,
            h,
            h_inv,
            rms_px: doc.fit.rms_px,
            rms_mm: doc.fit.rms_mm,
            points: doc.fit.points,
            source_image: doc.source_image,
            created: doc.created,
            notes: doc.notes,
        })
    }

    /// The calibration as TOML text.
    pub fn to_toml(&self) -> String {
        let doc = FileDoc {
            format: FORMAT_NAME.into(),
            version: FORMAT_VERSION,
            created: self.created.clone(),
            source_image: self.source_image.clone(),
            notes: self.notes.clone(),
            image: ImageSection {
                width: self.image_width,
                height: self.image_height,
            },
            fit: FitSection {
                points: self.points,
                rms_px: self.rms_px,
                rms_mm: self.rms_mm,
            },
            mapping: MappingSection {
                pixel_to_mm: rows(&self.h),
                mm_to_pixel: rows(&self.h_inv),
            },
        };
        let body = toml::to_string(&doc).unwrap_or_else(|e| format!("# cannot serialise: {e}\n"));
        format!(
            "# Screen calibration: homography from image pixels to screen millimetres.\n\
             # mapping.pixel_to_mm takes (x_px, y_px, 1) to homogeneous (x_mm, y_mm, w).\n{body}"
        )
    }

    /// Write the calibration file (whole, then renamed into place so a reader never sees half a file).
    pub fn save(&self, path: &Path) -> Result<(), CalibError> {
        let werr = |source| CalibError::Write {
            path: path.to_path_buf(),
            source,
        };
        crate::outfile::write_whole(path, |out| out.write_all(self.to_toml().as_bytes()))
            .map_err(werr)
    }
}

/// Both matrices finite, invertible and inverse to each other up to scale.
fn check_pair(h: &Matrix3<f64>, h_inv: &Matrix3<f64>) -> Result<(), String> {
    if h.iter().chain(h_inv.iter()).any(|v| !v.is_finite()) {
        return Err("the mapping matrices contain a value that is not a finite number".into());
    }
    let prod = h * h_inv;
    let s = prod[(2, 2)];
    let scale = prod.abs().max();
    if scale == 0.0 || s.abs() < 1e-12 * scale {
        return Err("the mapping matrices are singular or not inverse to each other".into());
    }
    let dev = (prod / s - Matrix3::identity()).abs().max();
    if dev > 1e-6 {
        return Err(format!(
            "mapping.pixel_to_mm and mapping.mm_to_pixel are not inverse to each other \
             (product differs from identity by {dev:.2e}); recalibrate"
        ));
    }
    Ok(())
}

/// Current UTC time as RFC 3339 (seconds resolution).
pub fn utc_now_rfc3339() -> String {
    let secs = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| d.as_secs() as i64)
        .unwrap_or(0);
    rfc3339_from_unix(secs)
}

/// RFC 3339 text of a Unix time, UTC. Civil date from day count by the proleptic Gregorian rules
/// (days-from-civil inverse; common practice, no source).
pub fn rfc3339_from_unix(secs: i64) -> String {
    let days = secs.div_euclid(86_400);
    let rem = secs.rem_euclid(86_400);
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    format!(
        "{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z",
        rem / 3600,
        (rem / 60) % 60,
        rem % 60
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unix_time_to_rfc3339() {
        // Known instants (POSIX time definition; values from memory, cross-checked with `date -u -d @N`).
        assert_eq!(rfc3339_from_unix(0), "1970-01-01T00:00:00Z");
        assert_eq!(rfc3339_from_unix(951_782_400), "2000-02-29T00:00:00Z");
        assert_eq!(rfc3339_from_unix(1_700_000_000), "2023-11-14T22:13:20Z");
    }

    #[test]
    fn line_numbers_count_from_one() {
        assert_eq!(line_of("a\nb\nc", 0), 1);
        assert_eq!(line_of("a\nb\nc", 2), 2);
        assert_eq!(line_of("a\nb\nc", 4), 3);
    }
}
