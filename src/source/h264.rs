//! The built-in video reader, for machines without the `ffmpeg` program: MP4 files holding H.264
//! without B-frames, demuxed by the `mp4` crate and decoded by the bundled OpenH264 decoder.
//!
//! That decoder cannot decode B-frames, so files that reorder frames (a composition-offset table with
//! non-zero offsets, or any B slice) are refused with advice to install ffmpeg, never decoded into
//! garbage. Luma is the decoder's Y plane expanded from studio range (16–235) to 0–255, which is
//! what the ffmpeg path delivers for the same file.

use super::annexb::{push_nal, slice_kind, split_length_prefixed, SliceKind};
use super::thin::Thinner;
use super::{Delivery, FrameSource, OpenOptions, SourceError, SourceInfo, INSTALL_FFMPEG};
use crate::error::IoError;
use crate::frame::{Channel, Frame};
use crate::units::Seconds;
use openh264::decoder::{DecodedYUV, Decoder};
use openh264::formats::YUVSource;
use std::fs::File;
use std::io::{BufReader, Read};
use std::path::{Path, PathBuf};

/// An MP4/H.264 file decoded in-process.
pub struct BuiltinH264Source {
    info: SourceInfo,
    path: PathBuf,
    reader: mp4::Mp4Reader<BufReader<File>>,
    decoder: Decoder,
    track: u32,
    samples: u32,
    next_sample: u32,
    len_size: usize,
    headers: Vec<u8>,
    timescale: f64,
    first_pts: Option<i64>,
    channel: Channel,
    thin: Thinner,
    last_t: f64,
    done: bool,
    rgb: Vec<u8>,
    /// With `--every`, when every kept frame is a sync (IDR) sample: the sample numbers to decode.
    key_plan: Option<std::collections::VecDeque<u32>>,
}

/// Sample numbers (1-based) of the frames `--every` keeps, when all of them are sync samples, from
/// the time-to-sample and sync-sample tables (ISO/IEC 14496-12 §8.6.1.2, §8.6.2) without reading
/// any frame. Presentation order equals decode order here (files with reordering are refused).
fn key_plan(
    track: &mp4::Mp4Track,
    every: Seconds,
    timescale: f64,
) -> Option<std::collections::VecDeque<u32>> {
    let stbl = &track.trak.mdia.minf.stbl;
    let sync: Option<std::collections::HashSet<u32>> = stbl
        .stss
        .as_ref()
        .map(|s| s.entries.iter().copied().collect());
    let mut frames = Vec::new();
    let (mut id, mut dts) = (1u32, 0u64);
    for e in &stbl.stts.entries {
        for _ in 0..e.sample_count {
            let key = sync.as_ref().is_none_or(|s| s.contains(&id));
            frames.push((id, Seconds(dts as f64 / timescale), key));
            dts += e.sample_delta as u64;
            id += 1;
        }
    }
    if !super::keyframes_suffice(frames.iter().map(|&(_, t, k)| (t, k)), every) {
        return None;
    }
    let mut thin = Thinner::new(Some(every));
    Some(
        frames
            .into_iter()
            .filter(|&(_, t, _)| thin.keep(t))
            .map(|(i, _, _)| i)
            .collect(),
    )
}

fn container_guess(path: &Path) -> (String, String) {
    let mut head = vec![0u8; 1 << 16];
    let n = File::open(path)
        .and_then(|mut f| f.read(&mut head))
        .unwrap_or(0);
    let head = &head[..n];
    if head.len() >= 12 && &head[..4] == b"RIFF" && &head[8..12] == b"AVI " {
        let codec = head
            .windows(4)
            .position(|w| w == b"vids")
            .and_then(|i| head.get(i + 4..i + 8))
            .map(|c| String::from_utf8_lossy(c).trim().to_string())
            .unwrap_or_else(|| "unknown".into());
        return ("AVI".into(), format!("video codec '{codec}'"));
    }
    if head.starts_with(&[0x1a, 0x45, 0xdf, 0xa3]) {
        return ("Matroska/WebM".into(), "codec not read".into());
    }
    if head.len() >= 8 && &head[4..8] == b"ftyp" {
        return ("MP4/QuickTime".into(), "codec not read".into());
    }
    ("unknown container".into(), "codec not read".into())
}

/// End of the last complete top-level box. A recording cut short ends inside its media-data box;
/// the index before it still locates the frames that were written, so the header is read only up
/// to that box (ISO/IEC 14496-12 §4.2: 32-bit size, 1 = 64-bit size follows, 0 = to end of file).
fn complete_boxes_end(file: &mut BufReader<File>, len: u64) -> u64 {
    use std::io::{Seek, SeekFrom};
    let mut at = 0u64;
    let end = loop {
        if at + 8 > len || file.seek(SeekFrom::Start(at)).is_err() {
            break at.min(len);
        }
        let mut h = [0u8; 16];
        if file.read_exact(&mut h[..8]).is_err() {
            break at;
        }
        let mut size = u32::from_be_bytes([h[0], h[1], h[2], h[3]]) as u64;
        if size == 1 {
            if file.read_exact(&mut h[8..16]).is_err() {
                break at;
            }
            size = u64::from_be_bytes([h[8], h[9], h[10], h[11], h[12], h[13], h[14], h[15]]);
        } else if size == 0 {
            size = len - at;
        }
        if size < 8 || at + size > len {
            break at;
        }
        at += size;
    };
    let _ = file.seek(SeekFrom::Start(0));
    end
}

/// The error for a file the built-in reader cannot decode: `codec` says what it holds, `why` why
/// not.
fn needs_decoder(shown: &str, codec: String, why: &str) -> SourceError {
    SourceError::NeedsDecoder {
        path: shown.to_string(),
        codec,
        advice: format!("{why}; the built-in reader handles only MP4 with H.264 without B-frames: {INSTALL_FFMPEG}"),
    }
}

/// Open `path` and read its MP4 index (up to the last complete top-level box).
fn read_index(path: &Path, shown: &str) -> Result<mp4::Mp4Reader<BufReader<File>>, SourceError> {
    let file = File::open(path).map_err(|e| SourceError::from_io(path, e))?;
    let size = file
        .metadata()
        .map_err(|source| {
            SourceError::Io(IoError {
                path: shown.into(),
                source,
            })
        })?
        .len();
    let mut file = BufReader::new(file);
    let size = complete_boxes_end(&mut file, size);
    mp4::Mp4Reader::read_header(file, size).map_err(|e| {
        let (container, codec) = container_guess(path);
        if container == "MP4/QuickTime" {
            return needs_decoder(
                shown,
                format!("{container}, {codec}"),
                &format!("cannot read its index ({e}); a recording cut short often lacks it"),
            );
        }
        needs_decoder(shown, format!("{container}, {codec}"), "not an MP4 file")
    })
}

/// What the decoder needs from `track`'s H.264 configuration, when the built-in decoder can decode
/// it: the sequence and picture parameter sets as Annex B NAL units (sent before the first sample)
/// and the size of the samples' NAL length prefixes.
fn decoder_setup(track: &mp4::Mp4Track, shown: &str) -> Result<(Vec<u8>, usize), SourceError> {
    let stbl = &track.trak.mdia.minf.stbl;
    let Some(avc1) = stbl.stsd.avc1.as_ref() else {
        let codec = if stbl.stsd.hev1.is_some() {
            "HEVC (H.265)".to_string()
        } else if stbl.stsd.vp09.is_some() {
            "VP9".to_string()
        } else {
            track
                .box_type()
                .map(|b| format!("codec '{b}'"))
                .unwrap_or_else(|_| "a codec other than H.264".into())
        };
        return Err(needs_decoder(
            shown,
            codec,
            "the built-in decoder reads only H.264",
        ));
    };
    if stbl
        .ctts
        .as_ref()
        .is_some_and(|c| c.entries.iter().any(|e| e.sample_offset != 0))
    {
        return Err(needs_decoder(
            shown,
            "H.264 with B-frames".into(),
            "frames are stored out of display order (B-frames), which the built-in decoder cannot decode",
        ));
    }
    let mut headers = Vec::new();
    for s in &avc1.avcc.sequence_parameter_sets {
        push_nal(&mut headers, &s.bytes);
    }
    for p in &avc1.avcc.picture_parameter_sets {
        push_nal(&mut headers, &p.bytes);
    }
    let len_size = (avc1.avcc.length_size_minus_one & 3) as usize + 1;
    Ok((headers, len_size))
}

/// The source's description and sizes.
fn source_info(
    path: &Path,
    track: &mp4::Mp4Track,
    every: Option<Seconds>,
    key_frames_only: bool,
) -> SourceInfo {
    let (w, h) = (track.width() as usize, track.height() as usize);
    let expected = match every {
        None => Some(track.sample_count() as u64),
        Some(e) => {
            let d = track.duration().as_secs_f64();
            Some((d / e.0).ceil() as u64)
        }
    };
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    SourceInfo {
        description: format!(
            "{name}: h264 {w}x{h}, built-in decoder{}",
            if key_frames_only {
                ", key frames only"
            } else {
                ""
            }
        ),
        width: w,
        height: h,
        expected_frames: expected,
        crop: None,
    }
}

impl BuiltinH264Source {
    pub fn open(path: &Path, opts: &OpenOptions) -> Result<Self, SourceError> {
        let shown = path.display().to_string();
        let reader = read_index(path, &shown)?;
        let Some(track) = reader
            .tracks()
            .values()
            .find(|t| matches!(t.track_type(), Ok(mp4::TrackType::Video)))
        else {
            return Err(needs_decoder(
                &shown,
                "no video track".into(),
                "no video track in this MP4 file",
            ));
        };
        let (headers, len_size) = decoder_setup(track, &shown)?;
        let (track_id, samples, timescale) = (
            track.track_id(),
            track.sample_count(),
            track.timescale() as f64,
        );
        let timescale = if timescale > 0.0 { timescale } else { 1.0 };
        let key_plan = opts.every.and_then(|e| key_plan(track, e, timescale));
        let decoder = Decoder::new().map_err(|e| SourceError::Decode {
            origin: shown.clone(),
            message: format!("cannot start the built-in H.264 decoder: {e}"),
        })?;
        let info = source_info(path, track, opts.every, key_plan.is_some());
        Ok(Self {
            info,
            path: path.to_path_buf(),
            reader,
            decoder,
            track: track_id,
            samples,
            next_sample: 1,
            len_size,
            headers,
            timescale,
            first_pts: None,
            channel: opts.channel,
            thin: Thinner::new(opts.every),
            last_t: 0.0,
            done: false,
            rgb: Vec::new(),
            key_plan,
        })
    }

    /// Whether only key frames are decoded.
    pub fn key_frames_only(&self) -> bool {
        self.key_plan.is_some()
    }

    fn truncated(
        &mut self,
        decoded: u64,
        message: String,
    ) -> Option<Result<Delivery, SourceError>> {
        self.done = true;
        Some(Err(SourceError::Truncated {
            origin: self.path.display().to_string(),
            frames: decoded,
            t_s: self.last_t,
            message,
        }))
    }
}

/// The delivery for the picture decoded from frame `index` at `t` (named `origin` in messages):
/// the frame, `Unreadable` when the decoder gave no picture, or an error when its size is not the
/// track's `size`.
fn picture_delivery(
    decoded: Result<Option<DecodedYUV<'_>>, openh264::Error>,
    (index, t, origin): (u64, Seconds, String),
    size: (usize, usize),
    channel: Channel,
    rgb: &mut Vec<u8>,
) -> Result<Delivery, SourceError> {
    let unreadable = |origin, reason| Delivery::Unreadable {
        index,
        t,
        origin,
        reason,
    };
    let yuv = match decoded {
        Ok(Some(yuv)) => yuv,
        Ok(None) => return Ok(unreadable(origin, "the decoder returned no picture".into())),
        Err(e) => return Ok(unreadable(origin, format!("H.264 decoding failed: {e}"))),
    };
    let (w, h) = yuv.dimensions();
    if (w, h) != size {
        return Err(SourceError::Decode {
            origin,
            message: format!(
                "picture is {w}x{h} but the track says {}x{}",
                size.0, size.1
            ),
        });
    }
    let plane = if channel == Channel::Luma {
        super::pixels::plane_from_limited_luma(w, h, yuv.y(), yuv.strides().0)
    } else {
        rgb.resize(w * h * 3, 0);
        yuv.write_rgb8(rgb);
        super::pixels::plane_from_rgb24(w, h, rgb, channel)
    };
    Ok(Delivery::Frame(Frame {
        index,
        t,
        plane,
        origin,
    }))
}

impl BuiltinH264Source {
    /// One sample's NAL units in Annex B form, the parameter sets before the first: `None` when
    /// the length prefixes overrun the sample, an error at the first B slice (frame `index`).
    fn annexb(&mut self, bytes: &[u8], index: u64) -> Result<Option<Vec<u8>>, SourceError> {
        let Some(nals) = split_length_prefixed(bytes, self.len_size) else {
            return Ok(None);
        };
        let mut annexb = if !self.headers.is_empty() {
            std::mem::take(&mut self.headers)
        } else {
            Vec::new()
        };
        for nal in &nals {
            if slice_kind(nal) == Some(SliceKind::B) {
                return Err(SourceError::NeedsDecoder {
                    path: self.path.display().to_string(),
                    codec: format!("H.264 with B-frames (first at frame {index})"),
                    advice: format!(
                        "the built-in decoder cannot decode B-frames: {INSTALL_FFMPEG}"
                    ),
                });
            }
            push_nal(&mut annexb, nal);
        }
        Ok(Some(annexb))
    }
}

impl FrameSource for BuiltinH264Source {
    fn info(&self) -> &SourceInfo {
        &self.info
    }

    fn next_delivery(&mut self) -> Option<Result<Delivery, SourceError>> {
        loop {
            if let Some(plan) = self.key_plan.as_mut() {
                match plan.pop_front() {
                    Some(id) => self.next_sample = id,
                    None => return None,
                }
            }
            if self.done || self.next_sample > self.samples {
                return None;
            }
            let id = self.next_sample;
            let index = (id - 1) as u64;
            self.next_sample += 1;
            let sample = match self.reader.read_sample(self.track, id) {
                Ok(Some(s)) => s,
                Ok(None) => return None,
                Err(e) => {
                    return self.truncated(
                        index,
                        format!("frame {index} cannot be read from the file ({e})"),
                    )
                }
            };
            let pts = sample.start_time as i64 + sample.rendering_offset as i64;
            let first = *self.first_pts.get_or_insert(pts);
            let t = Seconds((pts - first) as f64 / self.timescale);
            let origin = format!("frame {index} of {}", self.path.display());
            let annexb = match self.annexb(&sample.bytes, index) {
                Ok(Some(a)) => a,
                Ok(None) => {
                    self.last_t = t.0;
                    if self.thin.keep(t) {
                        return Some(Ok(Delivery::Unreadable {
                            index,
                            t,
                            origin,
                            reason: "NAL unit lengths overrun the sample".into(),
                        }));
                    }
                    continue;
                }
                Err(e) => {
                    self.done = true;
                    return Some(Err(e));
                }
            };
            let keep = self.thin.keep(t);
            self.last_t = t.0;
            let decoded = self.decoder.decode(&annexb);
            if !keep {
                continue;
            }
            let size = (self.info.width, self.info.height);
            let delivery = picture_delivery(
                decoded,
                (index, t, origin),
                size,
                self.channel,
                &mut self.rgb,
            );
            if delivery.is_err() {
                self.done = true;
            }
            return Some(delivery);
        }
    }
}
