//! Image sequences: a folder (or glob pattern) of PNG/JPEG/TIFF/BMP files in natural file-name
//! order, timed by a `file,t_s` times file or a frame rate.
//!
//! Image headers are checked before the first frame is delivered, so mixed sizes are reported with
//! the first offending file before any row is written. A file whose pixels cannot be decoded is
//! delivered as [`Delivery::Unreadable`] and the run goes on.

use super::pixels::plane_from_image;
use super::thin::Thinner;
use super::times::read_times;
use super::{is_image_path, Delivery, FrameSource, OpenOptions, SourceError, SourceInfo};
use crate::error::IoError;
use crate::frame::{Channel, Frame};
use crate::units::Seconds;
use std::path::{Path, PathBuf};

/// A timed list of image files.
pub struct ImageSequence {
    info: SourceInfo,
    /// Kept files with their index in the full sequence and their time.
    files: Vec<(u64, Seconds, PathBuf)>,
    next: usize,
    channel: Channel,
}

fn name_of(p: &Path) -> String {
    p.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| p.display().to_string())
}

fn list_files(path: &Path) -> Result<(Vec<PathBuf>, PathBuf), SourceError> {
    let shown = path.display().to_string();
    let mut files: Vec<PathBuf>;
    let folder: PathBuf;
    if path.is_dir() {
        folder = path.to_path_buf();
        let rd = std::fs::read_dir(path).map_err(|source| {
            SourceError::Io(IoError {
                path: shown.clone().into(),
                source,
            })
        })?;
        files = Vec::new();
        for e in rd {
            let e = e.map_err(|source| {
                SourceError::Io(IoError {
                    path: shown.clone().into(),
                    source,
                })
            })?;
            let p = e.path();
            if p.is_file() && is_image_path(&p) {
                files.push(p);
            }
        }
    } else {
        let pattern = path.to_string_lossy();
        let paths = glob::glob(&pattern).map_err(|e| SourceError::Invalid {
            path: shown.clone(),
            message: format!("not a valid file pattern: {e}"),
        })?;
        files = paths
            .filter_map(Result::ok)
            .filter(|p| p.is_file() && is_image_path(p))
            .collect();
        folder = match files.first() {
            Some(f) => f.parent().map(Path::to_path_buf).unwrap_or_default(),
            None => {
                return Err(SourceError::Missing { path: shown });
            }
        };
    }
    if files.is_empty() {
        return Err(SourceError::Invalid {
            path: shown,
            message: "no PNG, JPEG, TIFF or BMP images here; give the folder that holds the frames"
                .into(),
        });
    }
    files.sort_by(|a, b| super::natural_cmp(&name_of(a), &name_of(b)));
    Ok((files, folder))
}

/// Each file's time from the times file `tp`, checked to rise in file-name order.
fn times_from_file(all: &[PathBuf], tp: &Path) -> Result<Vec<Seconds>, SourceError> {
    let map = read_times(tp)?;
    let mut out = Vec::with_capacity(all.len());
    let mut prev: Option<(f64, usize, String)> = None;
    for f in all {
        let n = name_of(f);
        let Some(e) = map.get(&n) else {
            return Err(SourceError::Invalid {
                path: tp.display().to_string(),
                message: format!("no time for {n}; add a row '{n},<seconds>' or remove the file"),
            });
        };
        if let Some((pt, pl, pn)) = &prev {
            if e.t.0 <= *pt {
                return Err(SourceError::BadLine {
                    path: tp.display().to_string(),
                    line: e.line,
                    message: format!(
                        "{n} comes after {pn} (line {pl}) in file-name order but its time {} s is not later than {pt} s",
                        e.t.0
                    ),
                });
            }
        }
        prev = Some((e.t.0, e.line, n));
        out.push(e.t);
    }
    Ok(out)
}

/// Each file's time: from the times file (`--times`, else `times.csv` in `folder`), else from the
/// frame rate `--fps`.
fn times_of(
    all: &[PathBuf],
    folder: &Path,
    opts: &OpenOptions,
    shown: &str,
) -> Result<Vec<Seconds>, SourceError> {
    let times_path = opts.times.clone().or_else(|| {
        let p = folder.join("times.csv");
        p.is_file().then_some(p)
    });
    if let Some(tp) = &times_path {
        times_from_file(all, tp)
    } else if let Some(fps) = opts.fps {
        if !(fps.is_finite() && fps > 0.0) {
            return Err(SourceError::Invalid {
                path: shown.to_string(),
                message: format!("--fps {fps} is not a positive frame rate"),
            });
        }
        Ok((0..all.len()).map(|i| Seconds(i as f64 / fps)).collect())
    } else {
        Err(SourceError::Invalid {
            path: shown.to_string(),
            message: "no times.csv beside the images: give the frame times with --times FILE (CSV 'file,t_s') or the frame rate with --fps F".into(),
        })
    }
}

/// The one picture size of `files`, from their headers: the first readable header sets the size,
/// any other size stops here.
fn common_size(files: &[(u64, Seconds, PathBuf)], shown: &str) -> Result<(u32, u32), SourceError> {
    let mut size: Option<(u32, u32, String)> = None;
    for (_, _, f) in files {
        let Ok((w, h)) = image::image_dimensions(f) else {
            continue;
        };
        match &size {
            None => size = Some((w, h, name_of(f))),
            Some((sw, sh, first)) if (*sw, *sh) != (w, h) => {
                return Err(SourceError::Invalid {
                    path: f.display().to_string(),
                    message: format!(
                        "this image is {w}x{h} but {first} (the first image) is {sw}x{sh}; all frames of a run must have one size"
                    ),
                });
            }
            Some(_) => {}
        }
    }
    match size {
        Some((w, h, _)) => Ok((w, h)),
        None => Err(SourceError::Invalid {
            path: shown.to_string(),
            message: "none of the images can be read".into(),
        }),
    }
}

impl ImageSequence {
    pub fn open(path: &Path, opts: &OpenOptions) -> Result<Self, SourceError> {
        let shown = path.display().to_string();
        let (all, folder) = list_files(path)?;
        let times = times_of(&all, &folder, opts, &shown)?;
        let mut thin = Thinner::new(opts.every);
        let files: Vec<(u64, Seconds, PathBuf)> = all
            .into_iter()
            .zip(times)
            .enumerate()
            .filter(|(_, (_, t))| thin.keep(*t))
            .map(|(i, (f, t))| (i as u64, t, f))
            .collect();
        let (w, h) = common_size(&files, &shown)?;
        let info = SourceInfo {
            description: format!("{} images in {}", files.len(), folder.display()),
            width: w as usize,
            height: h as usize,
            expected_frames: Some(files.len() as u64),
            crop: None,
        };
        Ok(Self {
            info,
            files,
            next: 0,
            channel: opts.channel,
        })
    }
}

impl FrameSource for ImageSequence {
    fn info(&self) -> &SourceInfo {
        &self.info
    }

    fn next_delivery(&mut self) -> Option<Result<Delivery, SourceError>> {
        let (index, t, path) = self.files.get(self.next)?.clone();
        self.next += 1;
        let origin = path.display().to_string();
        let img = match image::ImageReader::open(&path)
            .and_then(|r| r.with_guessed_format())
            .map_err(|e| e.to_string())
            .and_then(|r| r.decode().map_err(|e| e.to_string()))
        {
            Ok(img) => img,
            Err(reason) => {
                return Some(Ok(Delivery::Unreadable {
                    index,
                    t,
                    origin,
                    reason,
                }))
            }
        };
        if (img.width() as usize, img.height() as usize) != (self.info.width, self.info.height) {
            return Some(Err(SourceError::Invalid {
                path: origin,
                message: format!(
                    "this image is {}x{} but the run's frames are {}x{}; all frames of a run must have one size",
                    img.width(),
                    img.height(),
                    self.info.width,
                    self.info.height
                ),
            }));
        }
        let plane = plane_from_image(img, self.channel);
        Some(Ok(Delivery::Frame(Frame {
            index,
            t,
            plane,
            origin,
        })))
    }
}
