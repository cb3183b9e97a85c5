//! What the ffmpeg-based sources (the `ffmpeg` program's pipe and the linked libraries) know about
//! ffmpeg's pixel formats: which have 8-bit luma as their first plane, when luma is studio range,
//! how a picture of a format becomes a plane of the chosen channel ([`Transfer`]) and how many
//! bytes each of its pixels takes on the way.

use super::pixels::plane_from_rgb24;
use crate::frame::{Channel, Plane, PlaneSizeError};

/// Pixel formats whose first plane is 8-bit luma, so that plane can be taken without scaling.
/// The `j` formats are full range (JPEG); the others follow the stream's colour range.
const LUMA_FIRST_FORMATS: [&str; 14] = [
    "yuv420p", "yuvj420p", "yuv422p", "yuvj422p", "yuv444p", "yuvj444p", "yuv440p", "yuvj440p",
    "yuv411p", "yuvj411p", "yuv410p", "yuva420p", "yuva422p", "yuva444p",
];

/// Whether pictures of ffmpeg's pixel format `pix_fmt` have 8-bit luma as their first plane.
pub(super) fn luma_first(pix_fmt: &str) -> bool {
    LUMA_FIRST_FORMATS.contains(&pix_fmt)
}

/// Whether luma of pixel format `pix_fmt` with colour range `color_range` ("pc", "tv", "unknown",
/// as ffmpeg names them) is studio range (16–235). Unknown range counts as studio range for YUV, as
/// ffmpeg's own scaler assumes.
pub(super) fn limited_range(pix_fmt: &str, color_range: &str) -> bool {
    !(pix_fmt.starts_with("yuvj") || color_range == "pc")
}

/// How decoded pictures become a plane.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Transfer {
    /// The decoder's first plane is 8-bit luma, taken as it is; `widen` when it is studio range.
    LumaPlane { widen: bool },
    /// ffmpeg's scaler makes a gray picture (formats whose first plane is not 8-bit luma).
    Gray,
    /// ffmpeg's scaler makes packed RGB, reduced to one channel here.
    Rgb,
}

impl Transfer {
    /// The transfer for pictures of pixel format `pix_fmt` and colour range `color_range` (as
    /// ffmpeg names them) when `channel` is wanted.
    pub(super) fn choose(pix_fmt: &str, color_range: &str, channel: Channel) -> Self {
        match channel {
            Channel::Luma if luma_first(pix_fmt) => Transfer::LumaPlane {
                widen: limited_range(pix_fmt, color_range),
            },
            Channel::Luma => Transfer::Gray,
            _ => Transfer::Rgb,
        }
    }

    /// Bytes per pixel of the pictures handed over: 3 for packed RGB, else 1.
    pub(super) fn bytes_per_pixel(self) -> usize {
        match self {
            Transfer::Rgb => 3,
            _ => 1,
        }
    }

    /// The `width` x `height` plane of `channel` from one picture's row-major `bytes`. A buffer the
    /// plane does not keep (packed RGB is reduced into a new one) comes back for reuse.
    pub(super) fn plane(
        self,
        width: usize,
        height: usize,
        bytes: Vec<u8>,
        channel: Channel,
    ) -> (Result<Plane, PlaneSizeError>, Option<Vec<u8>>) {
        match self {
            Transfer::LumaPlane { widen: true } => {
                (Plane::from_studio_luma_vec(width, height, bytes), None)
            }
            Transfer::LumaPlane { widen: false } | Transfer::Gray => {
                (Plane::from_u8_vec(width, height, bytes), None)
            }
            Transfer::Rgb => {
                let plane = plane_from_rgb24(width, height, &bytes, channel);
                (Ok(plane), Some(bytes))
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn planar_yuv_formats_are_luma_first_and_packed_or_deep_ones_not() {
        for f in ["yuv420p", "yuvj420p", "yuv444p", "yuva420p", "yuv410p"] {
            assert!(luma_first(f), "{f}");
        }
        for f in ["rgb24", "nv12", "yuv420p10le", "gray", "yuyv422", ""] {
            assert!(!luma_first(f), "{f}");
        }
    }

    #[test]
    fn jpeg_formats_and_pc_range_are_full_range_others_studio() {
        assert!(!limited_range("yuvj420p", "unknown"));
        assert!(!limited_range("yuvj420p", "tv"));
        assert!(!limited_range("yuv420p", "pc"));
        assert!(limited_range("yuv420p", "tv"));
        assert!(limited_range("yuv420p", "unknown"));
        assert!(limited_range("yuv420p", ""));
    }

    #[test]
    fn luma_is_taken_directly_only_from_luma_first_formats() {
        assert_eq!(
            Transfer::choose("yuv420p", "tv", Channel::Luma),
            Transfer::LumaPlane { widen: true }
        );
        assert_eq!(
            Transfer::choose("yuvj420p", "unknown", Channel::Luma),
            Transfer::LumaPlane { widen: false }
        );
        assert_eq!(
            Transfer::choose("nv12", "tv", Channel::Luma),
            Transfer::Gray
        );
        for c in [Channel::Red, Channel::Green, Channel::Blue] {
            assert_eq!(Transfer::choose("yuv420p", "tv", c), Transfer::Rgb);
        }
    }

    #[test]
    fn only_rgb_takes_three_bytes_a_pixel() {
        assert_eq!(Transfer::Rgb.bytes_per_pixel(), 3);
        assert_eq!(Transfer::Gray.bytes_per_pixel(), 1);
        assert_eq!(Transfer::LumaPlane { widen: true }.bytes_per_pixel(), 1);
    }

    #[test]
    fn planes_keep_gray_widen_studio_luma_and_return_rgb_buffers() {
        let values = |p: &Plane| p.values().collect::<Vec<u16>>();
        let (gray, back) = Transfer::Gray.plane(2, 1, vec![16, 235], Channel::Luma);
        assert!(back.is_none());
        assert_eq!(values(&gray.unwrap()), [16, 235]);
        // Studio black 16 and white 235 are full-range 0 and 255 (ITU-R BT.601).
        let widen = Transfer::LumaPlane { widen: true };
        let (studio, back) = widen.plane(2, 1, vec![16, 235], Channel::Luma);
        assert!(back.is_none());
        assert_eq!(values(&studio.unwrap()), [0, 255]);
        let rgb = vec![10, 20, 30, 40, 50, 60];
        let (red, back) = Transfer::Rgb.plane(2, 1, rgb.clone(), Channel::Red);
        assert_eq!(back, Some(rgb));
        assert_eq!(values(&red.unwrap()), [10, 40]);
        assert!(Transfer::Gray
            .plane(3, 1, vec![0, 0], Channel::Luma)
            .0
            .is_err());
    }
}
