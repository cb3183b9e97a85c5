//! Turning decoded pixels (still images, raw RGB or gray from a decoder, YUV planes) into a
//! [`Plane`] of the chosen [`Channel`].

use crate::frame::{Channel, Plane};
use image::DynamicImage;
use ndarray::Array2;

/// Reduce a decoded still image to one plane. Gray images give their gray values whatever the
/// channel; 16-bit images keep 16 bits (white 65535).
pub fn plane_from_image(img: DynamicImage, channel: Channel) -> Plane {
    let (w, h) = (img.width() as usize, img.height() as usize);
    let sixteen = matches!(
        img.color(),
        image::ColorType::L16
            | image::ColorType::La16
            | image::ColorType::Rgb16
            | image::ColorType::Rgba16
    );
    let gray = !img.color().has_color();
    let mut out = Vec::with_capacity(w * h);
    match (sixteen, gray) {
        (false, true) => out.extend(img.into_luma8().into_raw().into_iter().map(u16::from)),
        (true, true) => out.extend(img.into_luma16().into_raw()),
        (false, false) => out.extend(
            img.into_rgb8()
                .into_raw()
                .chunks_exact(3)
                .map(|p| channel.from_rgb(p[0] as u16, p[1] as u16, p[2] as u16)),
        ),
        (true, false) => out.extend(
            img.into_rgb16()
                .into_raw()
                .chunks_exact(3)
                .map(|p| channel.from_rgb(p[0], p[1], p[2])),
        ),
    }
    let white = if sixteen { u16::MAX } else { 255 };
    // The vector has exactly w*h values by construction.
    Plane::new(
        Array2::from_shape_vec((h, w), out).unwrap_or_else(|_| Array2::zeros((h, w))),
        white,
    )
}

/// One plane from packed 8-bit RGB rows.
pub fn plane_from_rgb24(width: usize, height: usize, rgb: &[u8], channel: Channel) -> Plane {
    let v: Vec<u16> = rgb
        .chunks_exact(3)
        .map(|p| channel.from_rgb(p[0] as u16, p[1] as u16, p[2] as u16))
        .collect();
    Plane::new(
        Array2::from_shape_vec((height, width), v)
            .unwrap_or_else(|_| Array2::zeros((height, width))),
        255,
    )
}

/// Expand a limited-range (16–235) luma sample to full range 0–255, as a decoder's gray output
/// does (ITU-R BT.601 studio range).
#[inline]
pub fn expand_limited_luma(y: u8) -> u16 {
    let v = (y as i32 - 16) * 255;
    ((v + 109).div_euclid(219)).clamp(0, 255) as u16
}

/// A full-range plane from a limited-range luma plane with row stride `stride`.
pub fn plane_from_limited_luma(width: usize, height: usize, y: &[u8], stride: usize) -> Plane {
    let mut v = Vec::with_capacity(width * height);
    for row in 0..height {
        let start = row * stride;
        match y.get(start..start + width) {
            Some(r) => v.extend(r.iter().map(|&s| expand_limited_luma(s))),
            None => v.extend(std::iter::repeat_n(0, width)),
        }
    }
    Plane::new(
        Array2::from_shape_vec((height, width), v)
            .unwrap_or_else(|_| Array2::zeros((height, width))),
        255,
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn limited_range_ends_map_to_full_range_ends() {
        // BT.601 studio range: black 16, white 235.
        assert_eq!(expand_limited_luma(16), 0);
        assert_eq!(expand_limited_luma(235), 255);
        assert_eq!(expand_limited_luma(0), 0);
        assert_eq!(expand_limited_luma(255), 255);
        assert_eq!(expand_limited_luma(126), 128);
    }

    #[test]
    fn rgb_channels() {
        let p = plane_from_rgb24(2, 1, &[200, 10, 20, 0, 0, 255], Channel::Red);
        assert_eq!(p.pixels[(0, 0)], 200);
        let p = plane_from_rgb24(2, 1, &[200, 10, 20, 0, 0, 255], Channel::Blue);
        assert_eq!(p.pixels[(0, 1)], 255);
    }
}
