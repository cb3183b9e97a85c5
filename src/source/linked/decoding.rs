//! The decoding side of [`LinkedSource`](super::LinkedSource): the demuxer, the decoder and the
//! loop that feeds packets in and takes pictures out until the end of the file, then says how the
//! run ended.

use super::super::keyplan::{self, Picker};
use super::super::{Delivery, SourceError, SourceInfo};
use super::error::LinkedError;
use super::picture::Layout;
use super::QUEUED_PICTURES;
use crate::frame::Channel;
use ffmpeg_next as av;
use std::collections::{HashSet, VecDeque};
use std::path::PathBuf;
use std::sync::mpsc::{Receiver, SyncSender};

/// Where the source is in the file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Stage {
    Reading,
    /// The file has ended (or could not be read further); the decoder gives back what it holds.
    Draining,
    Done,
}

/// The decoding side: the demuxer, the decoder and everything needed to turn its pictures into
/// deliveries. It lives on its own thread (see [`LinkedSource`](super::LinkedSource)).
pub(super) struct Decoding {
    pub info: SourceInfo,
    pub path: PathBuf,
    pub input: av::format::context::Input,
    pub stream: usize,
    pub decoder: av::decoder::Video,
    pub channel: Channel,
    pub layout: Option<Layout>,
    pub picture: av::frame::Video,
    pub scaled: av::frame::Video,
    pub packet: av::Packet,
    /// Which pictures become frames, and their indices.
    pub pick: Picker,
    /// With key frames only: the timestamps of the packets to decode.
    pub wanted: HashSet<i64>,
    pub pending: VecDeque<Delivery>,
    pub spare: Vec<Vec<u8>>,
    pub stage: Stage,
    pub packets: u64,
    pub nb_frames: Option<u64>,
    /// Why the file ends before its index says it does, when planning found out.
    pub ends_early: Option<String>,
    pub read_error: Option<String>,
    /// The last complaint of the decoder, and how many packets it refused.
    pub complaint: Option<String>,
    pub refused: u64,
}

fn is_again(e: &av::Error) -> bool {
    matches!(e, av::Error::Other { errno } if *errno == av::util::error::EAGAIN)
}

impl Decoding {
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
    fn finish(&mut self, fatal: Option<LinkedError>) -> Option<Result<Delivery, SourceError>> {
        self.stage = Stage::Done;
        let missing_planned = self.pick.planned_left();
        let short = if !self.pick.key_frames_only() {
            keyplan::short_file(self.nb_frames, self.packets)
        } else {
            None
        };
        let mut parts: Vec<String> = [
            fatal.map(|e| e.to_string()),
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

    /// The next delivery, `None` at the end (as
    /// [`FrameSource::next_delivery`](super::super::FrameSource::next_delivery)).
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

    /// Run on the decoding thread: send every delivery and the end (`None` or an error), taking
    /// buffers back from `spare` as they come, until the end or until the receiving side hangs up.
    pub(super) fn run(
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
