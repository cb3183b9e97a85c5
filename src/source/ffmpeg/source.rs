//! [`FfmpegSource`]: a video decoded by the `ffmpeg` program, its pictures read from the pipe and
//! their times from the `showinfo` lines on stderr, matched one to one in order.

use super::super::keyplan::{self, Picker};
use super::super::pixfmt::Transfer;
use super::super::{Delivery, FrameSource, OpenOptions, SourceError, SourceInfo, INSTALL_FFMPEG};
use super::command::{decoder_args, demuxer_args, Input};
use super::error::PipeError;
use super::pipe::{receive, spawn_pipe_reader, widen_pipe, Piece, QUEUED_PICTURES};
use super::probe::{ffmpeg_available, plan_key_frames, probe, Probe};
use super::stderr::{spawn_stderr_reader, TimingNote};
use crate::frame::{Channel, Frame, Plane, Roi};
use std::collections::VecDeque;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::sync::mpsc::{channel, sync_channel, Receiver, Sender};
use std::sync::{Arc, Mutex};
use std::thread::JoinHandle;

/// The last few problem lines of the ffmpegs' stderr.
type Problems = Arc<Mutex<VecDeque<String>>>;

/// A video decoded by the `ffmpeg` program.
pub struct FfmpegSource {
    info: SourceInfo,
    path: PathBuf,
    probe: Probe,
    child: Option<Child>,
    /// With key frames only: the ffmpeg that passes the key-frame packets to `child`, and the
    /// thread reading its stderr.
    demuxer: Option<Child>,
    demuxer_reader: Option<JoinHandle<()>>,
    /// Why the file ends before its index says it does, when planning found out.
    ends_early: Option<String>,
    pictures: Option<Receiver<Piece>>,
    spare: Sender<Vec<u8>>,
    pipe_reader: Option<JoinHandle<()>>,
    stamps: Receiver<TimingNote>,
    problems: Problems,
    reader: Option<JoinHandle<()>>,
    time_base: (i64, i64),
    channel: Channel,
    transfer: Transfer,
    frame_bytes: usize,
    /// Which pictures become frames, and their indices.
    pick: Picker,
    pending: VecDeque<Delivery>,
    done: bool,
}

/// With `--every`: the key frames to decode, whether the stream reorders frames, and why the file
/// ends before its index says it does (when the index shows it).
type KeyPlan = (Option<VecDeque<(i64, u64)>>, bool, Option<String>);

fn key_frame_plan(path: &Path, p: &Probe, opts: &OpenOptions) -> Result<KeyPlan, SourceError> {
    Ok(match opts.every {
        Some(e) => match plan_key_frames(path, p, e)? {
            Some(k) => {
                // Decoding only key frames never reads the missing end of a cut-off file, so
                // the index is what tells.
                let short = keyplan::short_file(p.nb_frames, k.packets);
                (Some(k.kept), k.reorders, short)
            }
            None => (None, false, None),
        },
        None => (None, false, None),
    })
}

/// Start an ffmpeg command with its stdout and stderr piped to us.
fn spawn_ffmpeg(cmd: &mut Command, path: &Path, codec: &str) -> Result<Child, SourceError> {
    cmd.stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .map_err(|e| SourceError::NeedsDecoder {
            path: path.display().to_string(),
            codec: codec.to_string(),
            advice: format!("cannot start ffmpeg ({e}); {INSTALL_FFMPEG}"),
        })
}

/// The running ffmpegs: the decoder, and on the key-frame path through a demuxer, that demuxer
/// with the thread reading its stderr.
struct Started {
    child: Child,
    demuxer: Option<Child>,
    demuxer_reader: Option<JoinHandle<()>>,
}

/// Start decoding `path` (its codec named for messages) as `input` says.
fn start(
    path: &Path,
    codec: &str,
    input: Input,
    transfer: Transfer,
    crop: Option<Roi>,
    problems: &Problems,
) -> Result<Started, SourceError> {
    // Key frames only: a first ffmpeg passes just the key-frame packets on (no decoding), so the
    // decoder sees an all-intra stream and its frame threads decode pictures side by side; told
    // to skip the other frames itself, one decoder works through them one at a time. Streams
    // with B-frames take the slower way: their times do not survive the copy.
    let mut demuxer = None;
    let mut demuxer_reader = None;
    let mut cmd = Command::new("ffmpeg");
    cmd.args(decoder_args(path, input, transfer, crop));
    if input == Input::KeyFramePackets {
        let mut d = Command::new("ffmpeg");
        d.args(demuxer_args(path)).stdin(Stdio::null());
        let mut d = spawn_ffmpeg(&mut d, path, codec)?;
        let packets = d.stdout.take();
        demuxer_reader = d
            .stderr
            .take()
            .map(|err| spawn_stderr_reader(err, None, problems.clone()));
        demuxer = Some(d);
        cmd.stdin(packets.map_or_else(Stdio::null, Stdio::from));
    } else {
        cmd.stdin(Stdio::null());
    }
    let child = spawn_ffmpeg(&mut cmd, path, codec)?;
    // The command holds this process's end of the demuxer's pipe until it is dropped.
    drop(cmd);
    Ok(Started {
        child,
        demuxer,
        demuxer_reader,
    })
}

/// Fail unless `path` is a file and the ffmpeg programs are there to read it.
fn check_can_open(path: &Path) -> Result<(), SourceError> {
    if !path.is_file() {
        return Err(SourceError::Missing {
            path: path.display().to_string(),
        });
    }
    if !ffmpeg_available() {
        return Err(SourceError::NeedsDecoder {
            path: path.display().to_string(),
            codec: "video".into(),
            advice: format!("ffmpeg and ffprobe are not on PATH; {INSTALL_FFMPEG}"),
        });
    }
    Ok(())
}

impl FfmpegSource {
    pub fn open(path: &Path, opts: &OpenOptions) -> Result<Self, SourceError> {
        check_can_open(path)?;
        let p = probe(path)?;
        let (plan, reorders, ends_early) = key_frame_plan(path, &p, opts)?;
        let transfer = Transfer::choose(&p.pix_fmt, &p.color_range, opts.channel);
        // A rectangle that does not fit is not cut; the caller sees `info.crop == None`.
        let crop = opts.crop.filter(|r| r.fits_in(p.width, p.height));
        let problems = Arc::new(Mutex::new(VecDeque::new()));
        let input = match (&plan, reorders) {
            (Some(_), true) => Input::KeyFramesOfFile,
            (Some(_), false) => Input::KeyFramePackets,
            (None, _) => Input::WholeFile,
        };
        let mut started = start(path, &p.codec, input, transfer, crop, &problems)?;
        let expected = keyplan::expected_frames(
            plan.as_ref().map(VecDeque::len),
            opts.every,
            p.duration,
            p.nb_frames,
            p.fps,
        );
        let info = SourceInfo {
            description: super::super::video_description(
                path,
                &p.codec,
                (p.width, p.height),
                "by ffmpeg",
                plan.is_some(),
                crop,
            ),
            width: p.width,
            height: p.height,
            expected_frames: expected,
            crop,
        };
        let (plane_w, plane_h) = info.plane_size();
        let frame_bytes = plane_w * plane_h * transfer.bytes_per_pixel();
        let (spare_tx, spare_rx) = channel();
        let (pictures_tx, pictures_rx) = sync_channel(QUEUED_PICTURES);
        let pipe_reader = started.child.stdout.take().map(|out| {
            widen_pipe(&out);
            spawn_pipe_reader(out, frame_bytes, spare_rx, pictures_tx)
        });
        let (tx, rx) = channel();
        let reader = started
            .child
            .stderr
            .take()
            .map(|err| spawn_stderr_reader(err, Some(tx), problems.clone()));
        Ok(Self {
            info,
            path: path.to_path_buf(),
            time_base: p.time_base,
            pick: Picker::new(opts.every, plan, p.start_pts, p.time_base),
            probe: p,
            child: Some(started.child),
            demuxer: started.demuxer,
            demuxer_reader: started.demuxer_reader,
            ends_early,
            pictures: Some(pictures_rx),
            spare: spare_tx,
            pipe_reader,
            stamps: rx,
            problems,
            reader,
            channel: opts.channel,
            transfer,
            frame_bytes,
            pending: VecDeque::new(),
            done: false,
        })
    }

    /// Whether only key frames are decoded.
    pub fn key_frames_only(&self) -> bool {
        self.pick.key_frames_only()
    }

    /// The next picture's bytes: Ok(Some) a full picture, Ok(None) a clean end.
    fn next_picture(&mut self) -> Result<Option<Vec<u8>>, PipeError> {
        let Some(pictures) = self.pictures.as_ref() else {
            return Ok(None);
        };
        match receive(pictures) {
            Ok(Piece::Picture(b)) => Ok(Some(b)),
            Ok(Piece::Partial(n)) => Err(PipeError::Incomplete {
                got: n,
                want: self.frame_bytes,
            }),
            Ok(Piece::Failed(e)) => Err(PipeError::Read(e)),
            Err(Some(seconds)) => Err(PipeError::Stalled { seconds }),
            Err(None) => Ok(None),
        }
    }

    /// Hand a picture buffer back to the pipe reader.
    fn give_back(&self, bytes: Vec<u8>) {
        if bytes.len() == self.frame_bytes {
            let _ = self.spare.send(bytes);
        }
    }

    fn next_pts(&mut self) -> Result<i64, PipeError> {
        loop {
            match receive(&self.stamps) {
                Ok(TimingNote::TimeBase(a, b)) => self.time_base = (a, b),
                Ok(TimingNote::Pts(p)) => return p.ok_or(PipeError::NoTimestamp),
                Err(Some(seconds)) => return Err(PipeError::Stalled { seconds }),
                Err(None) => return Err(PipeError::NoTimestamp),
            }
        }
    }

    /// A timestamp of the decoder's output in the ticks of the file's own time base (the key-frame
    /// path passes packets through another container, whose time base may differ).
    fn probe_ticks(&self, pts: i64) -> i64 {
        let (a, b) = self.time_base;
        let (pa, pb) = self.probe.time_base;
        if (a, b) == (pa, pb) || a <= 0 || b <= 0 || pa <= 0 || pb <= 0 {
            return pts;
        }
        let num = pts as i128 * a as i128 * pb as i128;
        let den = b as i128 * pa as i128;
        (num + num.signum() * den / 2).checked_div(den).unwrap_or(0) as i64
    }

    fn plane(&self, bytes: Vec<u8>) -> Result<Plane, PipeError> {
        let (w, h) = self.info.plane_size();
        let (plane, unused) = self.transfer.plane(w, h, bytes, self.channel);
        if let Some(bytes) = unused {
            self.give_back(bytes);
        }
        plane.map_err(PipeError::Plane)
    }

    /// Stop the pipe reader and the child (killed unless it has already ended).
    fn shut_down(&mut self, kill: bool) -> Option<std::process::ExitStatus> {
        // Closing the queue first lets a pipe reader blocked on a full queue end, which closes the
        // pipe, so an ffmpeg blocked on writing ends too.
        self.pictures = None;
        let stop = |c: Option<Child>| {
            c.and_then(|mut c| {
                if kill {
                    let _ = c.kill();
                }
                c.wait().ok()
            })
        };
        let status = stop(self.child.take());
        let demuxed = stop(self.demuxer.take());
        if let Some(r) = self.pipe_reader.take() {
            let _ = r.join();
        }
        for r in [self.reader.take(), self.demuxer_reader.take()]
            .into_iter()
            .flatten()
        {
            let _ = r.join();
        }
        match (status, demuxed) {
            (Some(s), Some(d)) if s.success() => Some(d),
            (s, _) => s,
        }
    }

    fn finish(&mut self, read_error: Option<PipeError>) -> Option<Result<Delivery, SourceError>> {
        self.done = true;
        let stalled = matches!(read_error, Some(PipeError::Stalled { .. }));
        let status = self.shut_down(stalled);
        let problems: Vec<String> = self
            .problems
            .lock()
            .map(|q| q.iter().cloned().collect())
            .unwrap_or_default();
        let failed = status.is_some_and(|s| !s.success());
        let missing_planned = self.pick.planned_left();
        let read_error = read_error
            .map(|e| e.to_string())
            .or_else(|| self.ends_early.take());
        if read_error.is_none() && !failed && problems.is_empty() && !missing_planned {
            return None;
        }
        let mut message = read_error.unwrap_or_default();
        if let Some(last) = problems.last() {
            if !message.is_empty() {
                message.push_str("; ");
            }
            message.push_str(&format!("ffmpeg said: {last}"));
        }
        if message.is_empty() {
            message = "ffmpeg ended with an error".into();
        }
        Some(Err(SourceError::stopped(
            &self.path,
            self.pick.decoded,
            self.pick.last_t,
            message,
        )))
    }
}

impl FrameSource for FfmpegSource {
    fn info(&self) -> &SourceInfo {
        &self.info
    }

    fn next_delivery(&mut self) -> Option<Result<Delivery, SourceError>> {
        loop {
            if let Some(d) = self.pending.pop_front() {
                return Some(Ok(d));
            }
            if self.done {
                return None;
            }
            let bytes = match self.next_picture() {
                Ok(Some(b)) => b,
                Ok(None) => return self.finish(None),
                Err(e) => return self.finish(Some(e)),
            };
            let pts = match self.next_pts() {
                Ok(p) => p,
                Err(e) => return self.finish(Some(e)),
            };
            let ticks = self.probe_ticks(pts);
            let (t, index) = self.pick.pick(ticks, &self.path, &mut self.pending);
            let Some(index) = index else {
                self.give_back(bytes);
                continue;
            };
            let plane = match self.plane(bytes) {
                Ok(p) => p,
                Err(e) => return self.finish(Some(e)),
            };
            self.pending
                .push_back(Delivery::Frame(super::super::video_frame(
                    &self.path, index, t, plane,
                )));
        }
    }

    fn recycle(&mut self, frame: Frame) {
        if let Some(bytes) = frame.plane.into_u8_vec() {
            self.give_back(bytes);
        }
    }
}

impl Drop for FfmpegSource {
    fn drop(&mut self) {
        self.shut_down(true);
    }
}
