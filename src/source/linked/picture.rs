//! From a decoded picture to a delivery: how the run's pictures become planes (chosen from the
//! first one), the copy of the wanted rectangle out of the decoder's buffer, and the checks that
//! every picture keeps the first one's size and format.

use super::super::pixfmt::Transfer;
use super::super::Delivery;
use super::decoding::Decoding;
use super::error::LinkedError;
use crate::frame::{Plane, Roi};
use ffmpeg_next as av;

/// The picture format the run was started with, and how it is turned into planes.
pub(super) struct Layout {
    format: av::format::Pixel,
    transfer: Transfer,
    scaler: Option<av::software::scaling::Context>,
}

impl Decoding {
    /// How the first picture's format becomes planes.
    fn choose_layout(&self) -> Result<Layout, LinkedError> {
        let format = self.picture.format();
        let name = format.descriptor().map_or("unknown", |d| d.name());
        let range = match self.picture.color_range() {
            av::util::color::Range::JPEG => "pc",
            av::util::color::Range::MPEG => "tv",
            _ => "unknown",
        };
        let transfer = Transfer::choose(name, range, self.channel);
        let target = match transfer {
            Transfer::LumaPlane { .. } => None,
            Transfer::Gray => Some(av::format::Pixel::GRAY8),
            Transfer::Rgb => Some(av::format::Pixel::RGB24),
        };
        let scaler = match target {
            None => None,
            Some(to) => {
                let (w, h) = (self.picture.width(), self.picture.height());
                Some(
                    av::software::scaling::Context::get(
                        format,
                        w,
                        h,
                        to,
                        w,
                        h,
                        av::software::scaling::Flags::BICUBIC,
                    )
                    .map_err(|source| LinkedError::NoScaler {
                        format: name.to_string(),
                        source,
                    })?,
                )
            }
        };
        Ok(Layout {
            format,
            transfer,
            scaler,
        })
    }

    /// The decoded picture (already checked against the layout) as a plane.
    fn plane(&mut self) -> Result<Plane, LinkedError> {
        let (w, h) = self.info.plane_size();
        let rect = self.info.crop.unwrap_or(Roi {
            x: 0,
            y: 0,
            width: w,
            height: h,
        });
        let Some(layout) = self.layout.as_mut() else {
            return Err(LinkedError::NoLayout);
        };
        let transfer = layout.transfer;
        let source = match layout.scaler.as_mut() {
            None => &self.picture,
            Some(s) => {
                s.run(&self.picture, &mut self.scaled)
                    .map_err(LinkedError::Scaler)?;
                &self.scaled
            }
        };
        let bytes = transfer.bytes_per_pixel();
        let (stride, data) = (source.stride(0), source.data(0));
        let row_bytes = rect.width * bytes;
        let mut buf = match self.spare.pop() {
            Some(mut b) => {
                b.clear();
                b
            }
            None => Vec::with_capacity(row_bytes * rect.height),
        };
        for row in rect.y..rect.y + rect.height {
            let start = row * stride + rect.x * bytes;
            let line = data
                .get(start..start + row_bytes)
                .ok_or(LinkedError::ShortPicture)?;
            buf.extend_from_slice(line);
        }
        let (plane, unused) = transfer.plane(w, h, buf, self.channel);
        if let Some(b) = unused {
            self.spare.push(b);
        }
        plane.map_err(LinkedError::Plane)
    }

    /// Turn the picture just decoded into a delivery (or drop it when thinning or the plan says
    /// so). An error ends the run.
    pub(super) fn take_picture(&mut self) -> Result<(), LinkedError> {
        let Some(ticks) = self.picture.timestamp().or_else(|| self.picture.pts()) else {
            return Err(LinkedError::NoTimestamp(self.pick.decoded));
        };
        let (t, index) = self.pick.pick(ticks, &self.path, &mut self.pending);
        let Some(index) = index else {
            return Ok(());
        };
        let (pw, ph) = (
            self.picture.width() as usize,
            self.picture.height() as usize,
        );
        if self.layout.is_none() {
            self.layout = Some(self.choose_layout()?);
        }
        let same_format = self
            .layout
            .as_ref()
            .is_some_and(|l| l.format == self.picture.format());
        if (pw, ph) != (self.info.width, self.info.height) || !same_format {
            return Err(LinkedError::PictureChange {
                from: (self.info.width, self.info.height),
                to: (pw, ph),
                index,
            });
        }
        let plane = self.plane()?;
        self.pending
            .push_back(Delivery::Frame(super::super::video_frame(
                &self.path, index, t, plane,
            )));
        Ok(())
    }
}
