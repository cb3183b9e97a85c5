//! Turning decoded pixels (still images, raw RGB or gray from a decoder, YUV planes) into a
//! [`Plane`] of the chosen [`Channel`].

use crate::frame::{Channel, Plane};
use image::DynamicImage;
use ndarray::Array2;

/// Reduce a decoded still image to one plane. Gray images give their gray values whatever the
/// channel; 8-bit images give 8-bit planes, 16-bit images keep 16 bits (white 65535).
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
    match (sixteen, gray) {
        (false, true) => eight_bit_plane(w, h, img.into_luma8().into_raw()),
        (false, false) => plane_from_rgb24(w, h, img.into_rgb8().as_raw(), channel),
        (true, true) => sixteen_bit_plane(w, h, img.into_luma16().into_raw()),
        (true, false) => sixteen_bit_plane(
            w,
            h,
            img.into_rgb16()
                .into_raw()
                .chunks_exact(3)
                .map(|p| channel.from_rgb(p[0], p[1], p[2]))
                .collect(),
        ),
    }
}

/// An 8-bit plane from `width * height` row-major values; a buffer of another length (which the
/// callers here rule out by construction) gives a black plane of the right size.
fn eight_bit_plane(width: usize, height: usize, v: Vec<u8>) -> Plane {
    Plane::from_u8_vec(width, height, v)
        .unwrap_or_else(|_| Plane::from_u8_array(Array2::zeros((height, width))))
}

/// A 16-bit plane (white 65535) from `width * height` row-major values, as [`eight_bit_plane`].
fn sixteen_bit_plane(width: usize, height: usize, v: Vec<u16>) -> Plane {
    Plane::new(
        Array2::from_shape_vec((height, width), v)
            .unwrap_or_else(|_| Array2::zeros((height, width))),
        u16::MAX,
    )
}

/// One 8-bit plane from packed 8-bit RGB rows.
pub fn plane_from_rgb24(width: usize, height: usize, rgb: &[u8], channel: Channel) -> Plane {
    let v: Vec<u8> = rgb
        .chunks_exact(3)
        .map(|p| channel.from_rgb8(p[0], p[1], p[2]))
        .collect();
    eight_bit_plane(width, height, v)
}

/// A plane of limited-range luma with row stride `stride`, kept as decoded (it reads as full range,
/// see [`crate::frame::Pixels::Studio`]). Rows the buffer does not reach are black.
pub fn plane_from_limited_luma(width: usize, height: usize, y: &[u8], stride: usize) -> Plane {
    let mut v = Vec::with_capacity(width * height);
    for row in 0..height {
        let start = row * stride;
        match y.get(start..start + width) {
            Some(r) => v.extend_from_slice(r),
            // Limited-range black is 16.
            None => v.extend(std::iter::repeat_n(16, width)),
        }
    }
    Plane::from_studio_luma_vec(width, height, v)
        .unwrap_or_else(|_| Plane::from_u8_array(Array2::zeros((height, width))))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frame::{studio_to_full, Pixels};

    /// The studio-to-full range mapping of one sample, written as the definition reads.
    fn expand_limited_luma(y: u8) -> u16 {
        let v = (y as i32 - 16) * 255;
        ((v + 109).div_euclid(219)).clamp(0, 255) as u16
    }

    #[test]
    fn limited_range_ends_map_to_full_range_ends() {
        // BT.601 studio range: black 16, white 235.
        assert_eq!(expand_limited_luma(16), 0);
        assert_eq!(expand_limited_luma(235), 255);
        assert_eq!(expand_limited_luma(0), 0);
        assert_eq!(expand_limited_luma(255), 255);
        assert_eq!(expand_limited_luma(126), 128);
        let widened: Vec<u8> = [16u8, 235, 0, 255, 126]
            .iter()
            .map(|&y| studio_to_full(y))
            .collect();
        assert_eq!(widened, [0, 255, 0, 255, 128]);
    }

    #[test]
    fn rgb_channels() {
        let p = plane_from_rgb24(2, 1, &[200, 10, 20, 0, 0, 255], Channel::Red);
        assert_eq!(p.get(0, 0), Some(200));
        assert!(matches!(p.pixels(), Pixels::Eight(_)));
        let p = plane_from_rgb24(2, 1, &[200, 10, 20, 0, 0, 255], Channel::Blue);
        assert_eq!(p.get(1, 0), Some(255));
    }

    #[test]
    fn studio_widening_matches_the_sample_formula_for_every_byte() {
        for y in 0..=255u8 {
            assert_eq!(
                u16::from(studio_to_full(y)),
                expand_limited_luma(y),
                "input {y}"
            );
        }
    }

    #[test]
    fn limited_luma_plane_follows_the_stride_and_stays_as_decoded() {
        // Two rows of two samples in rows of stride 3 (the third byte is padding); one row short.
        let y = [16u8, 235, 99, 126, 20, 99];
        let p = plane_from_limited_luma(2, 3, &y, 3);
        assert!(matches!(p.pixels(), Pixels::Studio(_)));
        assert_eq!(p.white, 255);
        assert_eq!(
            p.values().collect::<Vec<_>>(),
            // (20 - 16) * 255 / 219 = 4.66 rounds to 5.
            vec![0, 255, 128, 5, 0, 0]
        );
    }

    #[test]
    fn still_images_keep_their_depth() {
        let gray8 =
            DynamicImage::ImageLuma8(image::GrayImage::from_raw(2, 1, vec![3, 250]).unwrap());
        let p = plane_from_image(gray8, Channel::Red);
        assert!(matches!(p.pixels(), Pixels::Eight(_)));
        assert_eq!((p.white, p.get(1, 0)), (255, Some(250)));
        let rgb8 =
            DynamicImage::ImageRgb8(image::RgbImage::from_raw(1, 1, vec![200, 10, 20]).unwrap());
        let p = plane_from_image(rgb8, Channel::Luma);
        assert!(matches!(p.pixels(), Pixels::Eight(_)));
        assert_eq!(p.get(0, 0), Some(Channel::Luma.from_rgb(200, 10, 20)));
        let gray16 = DynamicImage::ImageLuma16(
            image::ImageBuffer::from_raw(2, 1, vec![3u16, 60_000]).unwrap(),
        );
        let p = plane_from_image(gray16, Channel::Luma);
        assert!(matches!(p.pixels(), Pixels::Sixteen(_)));
        assert_eq!((p.white, p.get(1, 0)), (u16::MAX, Some(60_000)));
    }
}
