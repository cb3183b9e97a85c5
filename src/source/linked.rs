//! Video files decoded inside this process by ffmpeg's libraries, linked in by the optional
//! `linked-ffmpeg` feature (building it needs their development packages, pkg-config and libclang;
//! see the README, "Video input").
//!
//! Nothing crosses a pipe: each picture's luma plane is copied once, straight from the decoder's
//! buffer into the frame's (only the `--roi` rectangle when one is given), while the decoder's
//! frame threads decode the next pictures. In every other way it behaves as the `ffmpeg` program's
//! source: presentation times are the decoder's own timestamps counted from the stream's first one,
//! studio-range luma is kept as decoded, formats whose first plane is not 8-bit luma (and the colour
//! channels) go through ffmpeg's scaler, and with `--every` only the key frames are decoded when the
//! packet index shows that a full decode would keep exactly those.

use super::ffmpeg::{limited_range, luma_first};
use super::keyplan::{self, PacketFacts, Picker};
use super::{Delivery, FrameSource, OpenOptions, SourceError, SourceInfo};
use crate::error::IoError;
use crate::frame::{Channel, Frame, Plane, Roi};
use ffmpeg_next as av;
use std::collections::{HashSet, VecDeque};
use std::path::{Path, PathBuf};
use std::sync::mpsc::{channel, sync_channel, Receiver, Sender, SyncSender};
use std::thread::JoinHandle;

/// How a decoded picture becomes a plane; chosen from the first picture.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Output {
    /// The decoder's first plane is 8-bit luma, copied as it is; `widen` when it is studio range.
    LumaPlane { widen: bool },
    /// ffmpeg's scaler converts to gray (formats whose first plane is not 8-bit luma).
    Gray,
    /// ffmpeg's scaler converts to packed RGB, reduced to one channel here.
    Rgb,
}

/// Where the source is in the file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Stage {
    Reading,
    /// The file has ended (or could not be read further); the decoder gives back what it holds.
    Draining,
    Done,
}

/// The picture format the run was started with, and how it is turned into planes.
struct Layout {
    format: av::format::Pixel,
    output: Output,
    scaler: Option<av::software::scaling::Context>,
}

/// The decoding side: the demuxer, the decoder and everything needed to turn its pictures into
/// deliveries. It lives on its own thread (see [`LinkedSource`]).
struct Decoding {
    info: SourceInfo,
    path: PathBuf,
    input: av::format::context::Input,
    stream: usize,
    decoder: av::decoder::Video,
    channel: Channel,
    layout: Option<Layout>,
    picture: av::frame::Video,
    scaled: av::frame::Video,
    packet: av::Packet,
    /// Which pictures become frames, and their indices.
    pick: Picker,
    /// With key frames only: the timestamps of the packets to decode.
    wanted: HashSet<i64>,
    pending: VecDeque<Delivery>,
    spare: Vec<Vec<u8>>,
    stage: Stage,
    packets: u64,
    nb_frames: Option<u64>,
    /// Why the file ends before its index says it does, when planning found out.
    ends_early: Option<String>,
    read_error: Option<String>,
    /// The last complaint of the decoder, and how many packets it refused.
    complaint: Option<String>,
    refused: u64,
}

fn rational(r: av::Rational) -> (i64, i64) {
    (i64::from(r.numerator()), i64::from(r.denominator()))
}

fn is_again(e: &av::Error) -> bool {
    matches!(e, av::Error::Other { errno } if *errno == av::util::error::EAGAIN)
}

fn decode_error(path: &Path, message: String) -> SourceError {
    SourceError::Decode {
        origin: path.display().to_string(),
        message,
    }
}

/// The stream's packets as the index lists them, read one at a time without decoding.
fn packet_facts(
    path: &Path,
    stream: usize,
) -> Result<impl Iterator<Item = PacketFacts>, SourceError> {
    let mut input = av::format::input(path)
        .map_err(|e| decode_error(path, format!("cannot read its packet index ({e})")))?;
    let mut packet = av::Packet::empty();
    Ok(std::iter::from_fn(move || loop {
        packet.read(&mut input).ok()?;
        if packet.stream() == stream {
            return Some(PacketFacts {
                pts: packet.pts(),
                dts: packet.dts(),
                key: packet.is_key(),
                discard: packet.flags().bits() & av::ffi::AV_PKT_FLAG_DISCARD != 0,
            });
        }
    }))
}

impl Decoding {
    fn open(path: &Path, opts: &OpenOptions) -> Result<Self, SourceError> {
        if !path.is_file() {
            return Err(SourceError::Missing {
                path: path.display().to_string(),
            });
        }
        av::init().map_err(|e| SourceError::NeedsDecoder {
            path: path.display().to_string(),
            codec: "video".into(),
            advice: format!("ffmpeg's libraries did not start ({e}); try --decoder ffmpeg"),
        })?;
        // The libraries' own messages would run through the progress display; problems are
        // reported from their error codes instead.
        av::util::log::set_level(av::util::log::Level::Quiet);
        let input = av::format::input(path).map_err(|e| {
            decode_error(
                path,
                format!("ffmpeg's libraries cannot read it ({e}); is it a video file?"),
            )
        })?;
        let st = input
            .streams()
            .find(|s| s.parameters().medium() == av::media::Type::Video)
            .ok_or_else(|| decode_error(path, "there is no video stream in this file".into()))?;
        let stream = st.index();
        let time_base = rational(st.time_base());
        let start_pts = match st.start_time() {
            av::ffi::AV_NOPTS_VALUE => 0,
            s => s,
        };
        let nb_frames = u64::try_from(st.frames()).ok().filter(|&n| n > 0);
        let fps = {
            let r = st.avg_frame_rate();
            (r.numerator() > 0 && r.denominator() > 0).then(|| f64::from(r))
        };
        let duration_s = match st.duration() {
            d if d > 0 && d != av::ffi::AV_NOPTS_VALUE => {
                Some(d as f64 * time_base.0 as f64 / time_base.1 as f64)
            }
            _ => (input.duration() > 0)
                .then(|| input.duration() as f64 / f64::from(av::ffi::AV_TIME_BASE)),
        };
        let codec_id = st.parameters().id();
        let codec = format!("{codec_id:?}").to_lowercase();
        let mut ctx = av::codec::context::Context::from_parameters(st.parameters())
            .map_err(|e| decode_error(path, format!("cannot set up its decoder ({e})")))?;
        // Frame threads, as many as the libraries choose (0): the next pictures decode while
        // this one is tracked.
        ctx.set_threading(av::codec::threading::Config {
            kind: av::codec::threading::Type::Frame,
            count: 0,
            ..Default::default()
        });
        let decoder = ctx
            .decoder()
            .video()
            .map_err(|e| SourceError::NeedsDecoder {
                path: path.display().to_string(),
                codec: codec.clone(),
                advice: format!(
                    "the linked ffmpeg libraries cannot decode it ({e}); try --decoder ffmpeg"
                ),
            })?;
        let (width, height) = (decoder.width() as usize, decoder.height() as usize);
        if width == 0 || height == 0 {
            return Err(decode_error(
                path,
                "its video stream does not say its picture size".into(),
            ));
        }
        let (plan, ends_early) = match opts.every {
            Some(e) => {
                let facts = packet_facts(path, stream)?;
                match keyplan::plan(facts, start_pts, time_base, e) {
                    // Decoding only key frames never reads the missing end of a cut-off file,
                    // so the index is what tells.
                    Some(k) => {
                        let short = keyplan::short_file(nb_frames, k.packets);
                        (Some(k.kept), short)
                    }
                    None => (None, None),
                }
            }
            None => (None, None),
        };
        let crop = opts.crop.filter(|r| r.fits_in(width, height));
        let info = SourceInfo {
            description: super::video_description(
                path,
                &codec,
                (width, height),
                "in-process by ffmpeg's libraries",
                plan.is_some(),
                crop,
            ),
            width,
            height,
            expected_frames: keyplan::expected_frames(
                plan.as_ref().map(VecDeque::len),
                opts.every,
                duration_s,
                nb_frames,
                fps,
            ),
            crop,
        };
        let pick = Picker::new(opts.every, plan, start_pts, time_base);
        Ok(Self {
            info,
            path: path.to_path_buf(),
            input,
            stream,
            decoder,
            channel: opts.channel,
            layout: None,
            picture: av::frame::Video::empty(),
            scaled: av::frame::Video::empty(),
            packet: av::Packet::empty(),
            wanted: pick.planned_ticks().collect(),
            pick,
            pending: VecDeque::new(),
            spare: Vec::new(),
            stage: Stage::Reading,
            packets: 0,
            nb_frames,
            ends_early,
            read_error: None,
            complaint: None,
            refused: 0,
        })
    }

    /// How the first picture's format becomes planes.
    fn choose_layout(&self) -> Result<Layout, String> {
        let format = self.picture.format();
        let name = format.descriptor().map_or("unknown", |d| d.name());
        let range = match self.picture.color_range() {
            av::util::color::Range::JPEG => "pc",
            av::util::color::Range::MPEG => "tv",
            _ => "unknown",
        };
        let output = match self.channel {
            Channel::Luma if luma_first(name) => Output::LumaPlane {
                widen: limited_range(name, range),
            },
            Channel::Luma => Output::Gray,
            _ => Output::Rgb,
        };
        let target = match output {
            Output::LumaPlane { .. } => None,
            Output::Gray => Some(av::format::Pixel::GRAY8),
            Output::Rgb => Some(av::format::Pixel::RGB24),
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
                    .map_err(|e| format!("ffmpeg's scaler cannot convert {name} pictures ({e})"))?,
                )
            }
        };
        Ok(Layout {
            format,
            output,
            scaler,
        })
    }

    /// The decoded picture (already checked against the layout) as a plane.
    fn plane(&mut self) -> Result<Plane, String> {
        let (w, h) = self.info.plane_size();
        let rect = self.info.crop.unwrap_or(Roi {
            x: 0,
            y: 0,
            width: w,
            height: h,
        });
        let Some(layout) = self.layout.as_mut() else {
            return Err("no picture layout".into());
        };
        let output = layout.output;
        let source = match layout.scaler.as_mut() {
            None => &self.picture,
            Some(s) => {
                s.run(&self.picture, &mut self.scaled)
                    .map_err(|e| format!("ffmpeg's scaler failed ({e})"))?;
                &self.scaled
            }
        };
        let bytes = if output == Output::Rgb { 3 } else { 1 };
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
                .ok_or("the decoder's picture is smaller than it says")?;
            buf.extend_from_slice(line);
        }
        let plane = match output {
            Output::LumaPlane { widen: true } => Plane::from_studio_luma_vec(w, h, buf),
            Output::LumaPlane { widen: false } | Output::Gray => Plane::from_u8_vec(w, h, buf),
            Output::Rgb => {
                let plane = super::pixels::plane_from_rgb24(w, h, &buf, self.channel);
                self.spare.push(buf);
                Ok(plane)
            }
        };
        plane.map_err(|e| e.to_string())
    }

    /// Turn the picture just decoded into a delivery (or drop it when thinning or the plan says
    /// so). An error ends the run.
    fn take_picture(&mut self) -> Result<(), String> {
        let Some(ticks) = self.picture.timestamp().or_else(|| self.picture.pts()) else {
            return Err(format!(
                "the picture after frame {} has no timestamp",
                self.pick.decoded
            ));
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
            return Err(format!(
                "the pictures change from {}x{} to {pw}x{ph} (or change pixel format) at frame {index}; \
                 one run needs one picture size: cut the video there (ffmpeg -t) and track each part",
                self.info.width, self.info.height
            ));
        }
        let plane = self.plane()?;
        self.pending.push_back(Delivery::Frame(super::video_frame(
            &self.path, index, t, plane,
        )));
        Ok(())
    }

    /// Read the next packet of the video stream into the decoder (or, at the end of the file, tell
    /// the decoder so).
    fn feed(&mut self) {
        loop {
            match self.packet.read(&mut self.input) {
                Ok(()) => {
                    if self.packet.stream() != self.stream {
                        continue;
                    }
                    self.packets += 1;
                    if self.pick.key_frames_only()
                        && !(self.packet.is_key()
                            && self.packet.pts().is_some_and(|p| self.wanted.contains(&p)))
                    {
                        continue;
                    }
                    if let Err(e) = self.decoder.send_packet(&self.packet) {
                        self.refused += 1;
                        self.complaint =
                            Some(format!("the decoder refused packet {} ({e})", self.packets));
                        continue;
                    }
                    return;
                }
                Err(e) => {
                    if e != av::Error::Eof {
                        self.read_error = Some(format!(
                            "reading stopped at packet {} ({e})",
                            self.packets + 1
                        ));
                    }
                    let _ = self.decoder.send_eof();
                    self.stage = Stage::Draining;
                    return;
                }
            }
        }
    }

    /// The end of the run: nothing more when the file was read whole and cleanly, else the error
    /// saying where decoding stopped and why.
    fn finish(&mut self, fatal: Option<String>) -> Option<Result<Delivery, SourceError>> {
        self.stage = Stage::Done;
        let missing_planned = self.pick.planned_left();
        let short = if !self.pick.key_frames_only() {
            keyplan::short_file(self.nb_frames, self.packets)
        } else {
            None
        };
        let mut parts: Vec<String> = [
            fatal,
            self.read_error.take(),
            self.ends_early.take(),
            short,
            self.complaint
                .take()
                .map(|c| format!("{c}; {} packets refused in all", self.refused)),
        ]
        .into_iter()
        .flatten()
        .collect();
        if parts.is_empty() && missing_planned {
            parts.push("the decoder returned no picture for the last key frames".into());
        }
        if parts.is_empty() {
            return None;
        }
        let message = parts.join("; ");
        Some(Err(SourceError::stopped(
            &self.path,
            self.pick.decoded,
            self.pick.last_t,
            message,
        )))
    }
}

impl Decoding {
    /// The next delivery, `None` at the end (as [`FrameSource::next_delivery`]).
    fn next_delivery(&mut self) -> Option<Result<Delivery, SourceError>> {
        loop {
            if let Some(d) = self.pending.pop_front() {
                return Some(Ok(d));
            }
            if self.stage == Stage::Done {
                return None;
            }
            match self.decoder.receive_frame(&mut self.picture) {
                Ok(()) => {
                    if let Err(e) = self.take_picture() {
                        return self.finish(Some(e));
                    }
                }
                Err(av::Error::Eof) => return self.finish(None),
                Err(e) if is_again(&e) && self.stage == Stage::Reading => self.feed(),
                Err(e) if is_again(&e) => return self.finish(None),
                Err(e) => {
                    self.refused += 1;
                    self.complaint = Some(format!(
                        "the decoder failed after frame {} ({e})",
                        self.pick.decoded
                    ));
                    if self.stage == Stage::Draining {
                        return self.finish(None);
                    }
                    self.feed();
                }
            }
        }
    }

    /// Run on the decoding thread: send `info`'s answer, then every delivery and the end (`None`
    /// or an error), taking buffers back from `spare` as they come, until the end or until the
    /// receiving side hangs up.
    fn run(
        mut self,
        deliveries: SyncSender<Option<Result<Delivery, SourceError>>>,
        spare: Receiver<Vec<u8>>,
    ) {
        loop {
            while let Ok(b) = spare.try_recv() {
                if self.spare.len() < QUEUED_PICTURES + 1 {
                    self.spare.push(b);
                }
            }
            let d = self.next_delivery();
            let last = !matches!(d, Some(Ok(_)));
            if deliveries.send(d).is_err() || last {
                return;
            }
        }
    }
}

/// Decoded pictures waiting for the tracker: enough that the decoder's threads never wait for it
/// while it works on one picture, few enough that memory does not grow with the run.
const QUEUED_PICTURES: usize = 3;

/// A video file decoded by ffmpeg's libraries inside this process. Decoding runs on its own
/// thread, a few pictures ahead, so the decoder's frame threads keep working while a picture is
/// tracked (the decoder starts a picture only when it is handed the next packet).
pub struct LinkedSource {
    info: SourceInfo,
    key_frames_only: bool,
    deliveries: Option<Receiver<Option<Result<Delivery, SourceError>>>>,
    spare: Sender<Vec<u8>>,
    worker: Option<JoinHandle<()>>,
}

impl LinkedSource {
    pub fn open(path: &Path, opts: &OpenOptions) -> Result<Self, SourceError> {
        let (opened_tx, opened_rx) = channel();
        let (deliveries_tx, deliveries_rx) = sync_channel(QUEUED_PICTURES);
        let (spare_tx, spare_rx) = channel();
        let (path_owned, opts) = (path.to_path_buf(), opts.clone());
        // The libraries' objects are made, used and dropped on this one thread.
        let worker = std::thread::Builder::new()
            .name("video decoding".into())
            .spawn(move || match Decoding::open(&path_owned, &opts) {
                Ok(d) => {
                    let facts = (d.info.clone(), d.pick.key_frames_only());
                    if opened_tx.send(Ok(facts)).is_ok() {
                        d.run(deliveries_tx, spare_rx);
                    }
                }
                Err(e) => {
                    let _ = opened_tx.send(Err(e));
                }
            })
            .map_err(|e| {
                SourceError::Io(IoError {
                    path: path.to_path_buf(),
                    source: e,
                })
            })?;
        let (info, key_frames_only) = match opened_rx.recv() {
            Ok(r) => r?,
            Err(_) => {
                let _ = worker.join();
                return Err(decode_error(
                    path,
                    "the decoding thread stopped while opening the file".into(),
                ));
            }
        };
        Ok(Self {
            info,
            key_frames_only,
            deliveries: Some(deliveries_rx),
            spare: spare_tx,
            worker: Some(worker),
        })
    }

    /// Whether only key frames are decoded.
    pub fn key_frames_only(&self) -> bool {
        self.key_frames_only
    }
}

impl FrameSource for LinkedSource {
    fn info(&self) -> &SourceInfo {
        &self.info
    }

    fn next_delivery(&mut self) -> Option<Result<Delivery, SourceError>> {
        let got = self.deliveries.as_ref()?.recv();
        match got {
            Ok(Some(d)) => Some(d),
            // The end, or a decoding thread that has gone (after its last word).
            Ok(None) | Err(_) => {
                self.deliveries = None;
                None
            }
        }
    }

    fn recycle(&mut self, frame: Frame) {
        if let Some(bytes) = frame.plane.into_u8_vec() {
            let _ = self.spare.send(bytes);
        }
    }
}

impl Drop for LinkedSource {
    fn drop(&mut self) {
        // Hanging up first ends a decoding thread that is waiting to hand over a picture.
        self.deliveries = None;
        if let Some(w) = self.worker.take() {
            let _ = w.join();
        }
    }
}
