//! Cameras: listing them and reading one as a frame source. The driver code (through `nokhwa`: V4L2
//! on Linux, the platform APIs elsewhere) is built only with the `camera` cargo feature; without it
//! every call says that this build has no camera support and how to get it.
//!
//! Frames are stamped with a monotonic clock shared by every reopening of the camera, so the run's
//! times keep counting through a gap.

use crate::frame::Channel;
use crate::source::{FrameSource, SourceError};
use std::time::Instant;
use thiserror::Error;

/// Why a camera cannot be listed, described or opened. Each says what to do.
#[derive(Debug, Error)]
pub enum CameraError {
    #[error("this build of spotlever has no camera support; rebuild with `cargo build --release --features camera` (on Linux first install libclang-dev), or replay a recording with --source")]
    NoSupport,
    #[error("no camera found{detail}; check that one is plugged in and that you may use it (on Linux: member of the 'video' group, /dev/video* present)")]
    NoneFound { detail: String },
    #[error("camera {camera}: {message}")]
    Device { camera: String, message: String },
}

/// Which camera to use.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum CameraChoice {
    /// The driver's index (0 is the first camera).
    Index(u32),
    /// The first camera whose name contains this text (case ignored).
    Name(String),
}

impl std::str::FromStr for CameraChoice {
    type Err = std::convert::Infallible;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Ok(match s.trim().parse::<u32>() {
            Ok(i) => CameraChoice::Index(i),
            Err(_) => CameraChoice::Name(s.trim().to_string()),
        })
    }
}

impl std::fmt::Display for CameraChoice {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            CameraChoice::Index(i) => write!(f, "camera {i}"),
            CameraChoice::Name(n) => write!(f, "camera {n:?}"),
        }
    }
}

/// How to open a camera.
#[derive(Debug, Clone, PartialEq)]
pub struct CameraRequest {
    pub choice: CameraChoice,
    /// Wanted width and height, px (the nearest the camera offers is used).
    pub resolution: Option<(u32, u32)>,
    /// Wanted frame rate.
    pub fps: Option<u32>,
    pub channel: Channel,
}

/// One camera the driver knows.
#[derive(Debug, Clone, PartialEq)]
pub struct CameraEntry {
    pub index: String,
    pub name: String,
    pub description: String,
}

/// What an opened camera said about itself.
#[derive(Debug, Clone, PartialEq)]
pub struct CameraFacts {
    pub name: String,
    /// Image size it delivers, px.
    pub width: u32,
    pub height: u32,
    /// Frame rate it runs at, when it tells one.
    pub fps: Option<f64>,
}

/// Whether this build can use cameras.
pub const CAMERA_SUPPORT: bool = cfg!(feature = "camera");

#[cfg(not(feature = "camera"))]
mod backend {
    use super::*;

    pub fn list_cameras() -> Result<Vec<CameraEntry>, CameraError> {
        Err(CameraError::NoSupport)
    }

    pub fn open_camera(
        _req: &CameraRequest,
        _clock: Instant,
    ) -> Result<Box<dyn FrameSource>, SourceError> {
        Err(SourceError::Invalid {
            path: "camera".into(),
            message: CameraError::NoSupport.to_string(),
        })
    }

    pub fn describe(_req: &CameraRequest) -> Result<CameraFacts, CameraError> {
        Err(CameraError::NoSupport)
    }
}

#[cfg(feature = "camera")]
mod backend {
    use super::*;
    use crate::frame::{Frame, Plane};
    use crate::source::{Delivery, SourceInfo};
    use crate::units::Seconds;
    use nokhwa::pixel_format::RgbFormat;
    use nokhwa::utils::{
        ApiBackend, CameraFormat, CameraIndex, FrameFormat, RequestedFormat, RequestedFormatType,
        Resolution,
    };
    use nokhwa::Camera;

    fn backend() -> ApiBackend {
        nokhwa::native_api_backend().unwrap_or(ApiBackend::Auto)
    }

    pub fn list_cameras() -> Result<Vec<CameraEntry>, CameraError> {
        let found = nokhwa::query(backend()).map_err(|e| CameraError::NoneFound {
            detail: format!(" (the camera driver answered: {e})"),
        })?;
        Ok(found
            .into_iter()
            .map(|c| CameraEntry {
                index: c.index().as_string(),
                name: c.human_name(),
                description: c.description().to_string(),
            })
            .collect())
    }

    fn index_for(choice: &CameraChoice) -> Result<CameraIndex, CameraError> {
        match choice {
            CameraChoice::Index(i) => Ok(CameraIndex::Index(*i)),
            CameraChoice::Name(n) => {
                let want = n.to_lowercase();
                let all = list_cameras()?;
                let names: Vec<String> = all.iter().map(|c| c.name.clone()).collect();
                let hit = all
                    .into_iter()
                    .find(|c| c.name.to_lowercase().contains(&want))
                    .ok_or_else(|| CameraError::Device {
                        camera: n.clone(),
                        message: if names.is_empty() {
                            "no camera is connected".into()
                        } else {
                            format!(
                                "no camera has this in its name; connected: {}",
                                names.join(", ")
                            )
                        },
                    })?;
                Ok(match hit.index.parse::<u32>() {
                    Ok(i) => CameraIndex::Index(i),
                    Err(_) => CameraIndex::String(hit.index),
                })
            }
        }
    }

    fn open(req: &CameraRequest) -> Result<(Camera, String), CameraError> {
        let index = index_for(&req.choice)?;
        let (w, h) = req.resolution.unwrap_or((1280, 720));
        let fps = req.fps.unwrap_or(30);
        let mut last_err = String::new();
        let wanted = [
            RequestedFormatType::Closest(CameraFormat::new(
                Resolution::new(w, h),
                FrameFormat::MJPEG,
                fps,
            )),
            RequestedFormatType::Closest(CameraFormat::new(
                Resolution::new(w, h),
                FrameFormat::YUYV,
                fps,
            )),
            RequestedFormatType::AbsoluteHighestFrameRate,
            RequestedFormatType::None,
        ];
        for want in wanted {
            match Camera::new(index.clone(), RequestedFormat::new::<RgbFormat>(want)) {
                Ok(mut cam) => match cam.open_stream() {
                    Ok(()) => {
                        let name = cam.info().human_name();
                        return Ok((cam, name));
                    }
                    Err(e) => last_err = e.to_string(),
                },
                Err(e) => last_err = e.to_string(),
            }
        }
        Err(CameraError::Device {
            camera: req.choice.to_string(),
            message: format!("cannot open it: {last_err}"),
        })
    }

    pub fn describe(req: &CameraRequest) -> Result<CameraFacts, CameraError> {
        let (mut cam, name) = open(req)?;
        let f = cam.camera_format();
        let _ = cam.stop_stream();
        Ok(CameraFacts {
            name,
            width: f.width(),
            height: f.height(),
            fps: Some(f.frame_rate() as f64).filter(|r| *r > 0.0),
        })
    }

    struct CameraSource {
        cam: Camera,
        info: SourceInfo,
        channel: Channel,
        clock: Instant,
        next: u64,
        name: String,
    }

    impl FrameSource for CameraSource {
        fn info(&self) -> &SourceInfo {
            &self.info
        }

        fn next_delivery(&mut self) -> Option<Result<Delivery, SourceError>> {
            let buf = match self.cam.frame() {
                Ok(b) => b,
                Err(e) => {
                    return Some(Err(SourceError::Decode {
                        origin: self.name.clone(),
                        message: format!("read failed: {e}"),
                    }))
                }
            };
            let t = Seconds(self.clock.elapsed().as_secs_f64());
            let index = self.next;
            self.next += 1;
            let origin = format!("frame {index} of {}", self.name);
            let img = match buf.decode_image::<RgbFormat>() {
                Ok(i) => i,
                Err(e) => {
                    return Some(Ok(Delivery::Unreadable {
                        index,
                        t,
                        origin,
                        reason: e.to_string(),
                    }))
                }
            };
            let (w, h) = (img.width() as usize, img.height() as usize);
            let ch = self.channel;
            let v: Vec<u8> = img
                .pixels()
                .map(|p| ch.from_rgb8(p.0[0], p.0[1], p.0[2]))
                .collect();
            let plane = match Plane::from_u8_vec(w, h, v) {
                Ok(p) => p,
                Err(e) => {
                    return Some(Ok(Delivery::Unreadable {
                        index,
                        t,
                        origin,
                        reason: e.to_string(),
                    }))
                }
            };
            Some(Ok(Delivery::Frame(Frame {
                index,
                t,
                plane,
                origin,
            })))
        }
    }

    impl Drop for CameraSource {
        fn drop(&mut self) {
            let _ = self.cam.stop_stream();
        }
    }

    pub fn open_camera(
        req: &CameraRequest,
        clock: Instant,
    ) -> Result<Box<dyn FrameSource>, SourceError> {
        let (cam, name) = open(req).map_err(|e| SourceError::Invalid {
            path: req.choice.to_string(),
            message: e.to_string(),
        })?;
        let f = cam.camera_format();
        Ok(Box::new(CameraSource {
            info: SourceInfo {
                description: format!(
                    "{name}, {}x{} {} at {} fps",
                    f.width(),
                    f.height(),
                    f.format(),
                    f.frame_rate()
                ),
                width: f.width() as usize,
                height: f.height() as usize,
                expected_frames: None,
                crop: None,
            },
            cam,
            channel: req.channel,
            clock,
            next: 0,
            name,
        }))
    }
}

/// The cameras the driver can see. Without the `camera` feature: an error saying how to rebuild.
pub fn list_cameras() -> Result<Vec<CameraEntry>, CameraError> {
    backend::list_cameras()
}

/// Open a camera as a frame source whose times count from `clock`.
pub fn open_camera(
    req: &CameraRequest,
    clock: Instant,
) -> Result<Box<dyn FrameSource>, SourceError> {
    backend::open_camera(req, clock)
}

/// Open the camera once to learn its name, image size and frame rate, then close it.
pub fn describe_camera(req: &CameraRequest) -> Result<CameraFacts, CameraError> {
    backend::describe(req)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn choice_from_text() {
        assert_eq!("2".parse::<CameraChoice>().unwrap(), CameraChoice::Index(2));
        assert_eq!(
            "USB cam".parse::<CameraChoice>().unwrap(),
            CameraChoice::Name("USB cam".into())
        );
    }

    #[cfg(not(feature = "camera"))]
    #[test]
    fn without_the_feature_calls_say_how_to_rebuild() {
        let e = list_cameras().unwrap_err().to_string();
        assert!(e.contains("--features camera"), "{e}");
    }
}
