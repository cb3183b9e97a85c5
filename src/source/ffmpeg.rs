//! Video files through the `ffmpeg` program: `ffprobe` for the stream's facts, then `ffmpeg` decoding
//! to raw 8-bit planes on a pipe, one frame at a time, never the whole video in memory.
//!
//! For luma, the decoder's own Y plane is sent as it is (`extractplanes`, a plain copy) and kept as
//! studio-range luma when the stream is limited-range (widened only where the finder reads it),
//! instead of asking ffmpeg's scaler for a gray picture, which costs about half as much again as
//! decoding. A reader thread drains the pipe
//! into a few recycled buffers, so decoding and tracking overlap and memory stays flat.
//!
//! Presentation times are exact: the `showinfo` filter reports every frame's integer timestamp and
//! time base on stderr, in the same order as the frames on the pipe, and frames pass through without
//! being duplicated or dropped (`-vsync passthrough`). With `--every`, when the first frame of every
//! interval is a key frame (checked from the packet index with `ffprobe`, without decoding), the
//! decoder skips all other frames (`-skip_frame nokey`) and the kept frames are the same ones a full
//! decode would keep.

use super::keyplan::{self, KeyFramePlan, PacketFacts, Picker};
use super::{Delivery, FrameSource, OpenOptions, SourceError, SourceInfo};
use crate::error::IoError;
use crate::frame::{Channel, Frame, Plane, PlaneSizeError, Roi};
use crate::units::Seconds;
use std::collections::VecDeque;
use std::io::{BufRead, BufReader, Read};
use std::path::{Path, PathBuf};
use std::process::{Child, ChildStderr, ChildStdout, Command, Stdio};
use std::sync::mpsc::{channel, sync_channel, Receiver, Sender, SyncSender};
use std::sync::{Arc, Mutex};
use std::thread::JoinHandle;

/// Decoded pictures waiting in the pipe reader's queue: enough to ride over a slow frame on either
/// side, few enough that memory does not grow with the run.
const QUEUED_PICTURES: usize = 3;

/// Pipe buffer asked for on Linux (the default 64 KiB makes a 1080p frame take 32 round trips).
#[cfg(target_os = "linux")]
const PIPE_BYTES: i32 = 1 << 20;

/// Pixel formats whose first plane is 8-bit luma, so `extractplanes=y` gives it without scaling.
/// The `j` formats are full range (JPEG); the others follow the stream's colour range.
const LUMA_FIRST_FORMATS: [&str; 14] = [
    "yuv420p", "yuvj420p", "yuv422p", "yuvj422p", "yuv444p", "yuvj444p", "yuv440p", "yuvj440p",
    "yuv411p", "yuvj411p", "yuv410p", "yuva420p", "yuva422p", "yuva444p",
];

fn find_program(name: &str) -> Option<PathBuf> {
    let path = std::env::var_os("PATH")?;
    std::env::split_paths(&path).find_map(|dir| {
        let p = dir.join(name);
        if p.is_file() {
            return Some(p);
        }
        let exe = dir.join(format!("{name}.exe"));
        exe.is_file().then_some(exe)
    })
}

/// Whether `ffmpeg` and `ffprobe` are on PATH.
pub fn ffmpeg_available() -> bool {
    find_program("ffmpeg").is_some() && find_program("ffprobe").is_some()
}

/// What `ffprobe` says about the first video stream.
#[derive(Debug, Clone, Default)]
struct Probe {
    codec: String,
    width: usize,
    height: usize,
    time_base: (i64, i64),
    start_pts: i64,
    nb_frames: Option<u64>,
    duration: Option<f64>,
    fps: Option<f64>,
    pix_fmt: String,
    color_range: String,
}

impl Probe {
    /// Whether the decoder's first plane is 8-bit luma that can be sent without conversion.
    fn luma_plane_direct(&self) -> bool {
        luma_first(&self.pix_fmt)
    }

    /// Whether the luma samples are studio range (16–235) and need widening to 0–255.
    fn limited_range(&self) -> bool {
        limited_range(&self.pix_fmt, &self.color_range)
    }
}

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

/// How decoded pictures travel through the pipe and become a plane.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Transfer {
    /// The Y plane as decoded; `widen` when it is studio range.
    LumaPlane { widen: bool },
    /// ffmpeg's scaler makes a gray picture (formats whose first plane is not 8-bit luma).
    Gray,
    /// Packed RGB, reduced to one channel here.
    Rgb,
}

impl Transfer {
    fn choose(p: &Probe, channel: Channel) -> Self {
        match channel {
            Channel::Luma if p.luma_plane_direct() => Transfer::LumaPlane {
                widen: p.limited_range(),
            },
            Channel::Luma => Transfer::Gray,
            _ => Transfer::Rgb,
        }
    }

    /// The filter chain and output pixel format given to ffmpeg, cutting each picture to `crop`.
    fn ffmpeg_output(self, crop: Option<Roi>) -> (String, &'static str) {
        // showinfo prints each frame's exact timestamp; its checksums are not needed. The picture is
        // put in its output format inside the chain, so the crop after it is exact to the pixel even
        // where chroma is subsampled (ffmpeg's crop only moves plane pointers; the muxer copies the
        // rectangle out).
        let (chain, pix_fmt) = match self {
            Transfer::LumaPlane { .. } => ("showinfo=checksum=0,extractplanes=y", "gray"),
            Transfer::Gray => ("showinfo=checksum=0,format=gray", "gray"),
            Transfer::Rgb => ("showinfo=checksum=0,format=rgb24", "rgb24"),
        };
        let chain = match crop {
            Some(r) => format!("{chain},crop={}:{}:{}:{}", r.width, r.height, r.x, r.y),
            None => chain.to_string(),
        };
        (chain, pix_fmt)
    }

    fn bytes_per_pixel(self) -> usize {
        match self {
            Transfer::Rgb => 3,
            _ => 1,
        }
    }
}

fn ratio(s: &str) -> Option<(i64, i64)> {
    let (a, b) = s.split_once('/')?;
    let (a, b) = (a.trim().parse().ok()?, b.trim().parse().ok()?);
    (b != 0).then_some((a, b))
}

fn run_tool(path: &Path, tool: &str, args: &[&str]) -> Result<String, SourceError> {
    let out = Command::new(tool)
        .args(args)
        .arg(path)
        .stdin(Stdio::null())
        .output()
        .map_err(|e| SourceError::NeedsDecoder {
            path: path.display().to_string(),
            codec: "video".into(),
            advice: format!("cannot run {tool} ({e}); {}", super::INSTALL_FFMPEG),
        })?;
    if !out.status.success() {
        let msg = String::from_utf8_lossy(&out.stderr);
        let msg = msg
            .lines()
            .last()
            .unwrap_or("no message")
            .trim()
            .to_string();
        return Err(SourceError::Decode {
            origin: path.display().to_string(),
            message: format!("{tool} cannot read it ({msg}); is it a video file?"),
        });
    }
    Ok(String::from_utf8_lossy(&out.stdout).into_owned())
}

fn probe(path: &Path) -> Result<Probe, SourceError> {
    let text = run_tool(
        path,
        "ffprobe",
        &[
            "-v",
            "error",
            "-select_streams",
            "v:0",
            "-show_entries",
            "stream=codec_name,width,height,time_base,start_pts,nb_frames,avg_frame_rate,duration,pix_fmt,color_range:format=duration",
            "-of",
            "default=noprint_wrappers=1",
        ],
    )?;
    let mut p = Probe {
        time_base: (1, 1),
        ..Probe::default()
    };
    for line in text.lines() {
        let Some((k, v)) = line.split_once('=') else {
            continue;
        };
        let v = v.trim();
        match k.trim() {
            "codec_name" => p.codec = v.to_string(),
            "width" => p.width = v.parse().unwrap_or(0),
            "height" => p.height = v.parse().unwrap_or(0),
            "time_base" => p.time_base = ratio(v).unwrap_or((1, 1)),
            "start_pts" => p.start_pts = v.parse().unwrap_or(0),
            "nb_frames" => p.nb_frames = v.parse().ok(),
            "avg_frame_rate" => {
                p.fps = ratio(v)
                    .map(|(a, b)| a as f64 / b as f64)
                    .filter(|f| *f > 0.0)
            }
            "duration" if p.duration.is_none() => p.duration = v.parse().ok(),
            "pix_fmt" => p.pix_fmt = v.to_string(),
            "color_range" => p.color_range = v.to_string(),
            _ => {}
        }
    }
    if p.codec.is_empty() || p.width == 0 || p.height == 0 {
        return Err(SourceError::Decode {
            origin: path.display().to_string(),
            message: "ffprobe finds no video stream in this file".into(),
        });
    }
    Ok(p)
}

/// Plan a key-frame-only decode from the packet index that `ffprobe` lists (without decoding);
/// `None` when a full decode is needed.
fn plan_key_frames(
    path: &Path,
    p: &Probe,
    every: Seconds,
) -> Result<Option<KeyFramePlan>, SourceError> {
    let mut child = Command::new("ffprobe")
        .args([
            "-v",
            "error",
            "-select_streams",
            "v:0",
            "-show_entries",
            "packet=pts,dts,flags",
            "-of",
            "csv=p=0",
        ])
        .arg(path)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .map_err(|source| {
            SourceError::Io(IoError {
                path: path.to_path_buf(),
                source,
            })
        })?;
    let Some(out) = child.stdout.take() else {
        return Ok(None);
    };
    let facts = BufReader::new(out)
        .lines()
        .map_while(Result::ok)
        .filter_map(|line| {
            let mut cells = line.split(',');
            let (pts, dts, flags) = (cells.next()?, cells.next()?, cells.next()?);
            Some(PacketFacts {
                pts: pts.trim().parse().ok(),
                dts: dts.trim().parse().ok(),
                key: flags.contains('K'),
                discard: flags.contains('D'),
            })
        });
    let planned = keyplan::plan(facts, p.start_pts, p.time_base, every);
    let _ = child.kill();
    let _ = child.wait();
    Ok(planned)
}

enum ErrMsg {
    TimeBase(i64, i64),
    Pts(Option<i64>),
}

fn parse_stderr_line(line: &str) -> Option<ErrMsg> {
    if !line.contains("Parsed_showinfo") {
        return None;
    }
    if let Some(rest) = line.split("config in time_base:").nth(1) {
        let tb = rest.split(',').next()?;
        let (a, b) = ratio(tb)?;
        return Some(ErrMsg::TimeBase(a, b));
    }
    if line.contains(" n:") {
        let rest = line.split(" pts:").nth(1)?;
        let tok = rest.split_whitespace().next()?;
        return Some(ErrMsg::Pts(tok.parse().ok()));
    }
    None
}

fn looks_like_problem(line: &str) -> bool {
    const WORDS: [&str; 9] = [
        "rror",
        "nvalid",
        "partial file",
        "runcat",
        "orrupt",
        "not found",
        "End of file",
        "incomplete",
        "missing",
    ];
    !line.contains("Parsed_showinfo") && WORDS.iter().any(|w| line.contains(w))
}

/// What the pipe reader hands over, in order; the channel closing means the pipe ended cleanly.
enum Piece {
    Picture(Vec<u8>),
    /// The pipe ended inside a picture, after this many of its bytes.
    Partial(usize),
    Failed(String),
}

/// Drain ffmpeg's stdout one picture at a time into `frame_bytes` buffers (taken from `spare` when
/// one has come back, else new), passing each through the bounded `pictures` queue.
fn spawn_pipe_reader(
    mut out: ChildStdout,
    frame_bytes: usize,
    spare: Receiver<Vec<u8>>,
    pictures: SyncSender<Piece>,
) -> JoinHandle<()> {
    std::thread::spawn(move || loop {
        let mut buf = match spare.try_recv() {
            Ok(b) if b.len() == frame_bytes => b,
            _ => vec![0; frame_bytes],
        };
        let mut filled = 0;
        let mut failed = None;
        while filled < frame_bytes {
            match out.read(&mut buf[filled..]) {
                Ok(0) => break,
                Ok(n) => filled += n,
                Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
                Err(e) => {
                    failed = Some(e.to_string());
                    break;
                }
            }
        }
        let piece = match (failed, filled) {
            (Some(e), _) => Piece::Failed(e),
            (None, 0) => return,
            (None, n) if n < frame_bytes => Piece::Partial(n),
            (None, _) => Piece::Picture(buf),
        };
        let more = matches!(piece, Piece::Picture(_));
        if pictures.send(piece).is_err() || !more {
            return;
        }
    })
}

/// Ask for a larger pipe buffer, so a picture crosses in a few large copies (Linux only; a refusal
/// only costs speed).
fn widen_pipe(out: &ChildStdout) {
    #[cfg(target_os = "linux")]
    {
        use std::os::fd::AsRawFd;
        // SAFETY: F_SETPIPE_SZ on a pipe descriptor we own; it changes only the buffer size.
        unsafe {
            libc::fcntl(out.as_raw_fd(), libc::F_SETPIPE_SZ, PIPE_BYTES);
        }
    }
    #[cfg(not(target_os = "linux"))]
    let _ = out;
}

/// Start an ffmpeg command with its stdout and stderr piped to us.
fn spawn_ffmpeg(cmd: &mut Command, path: &Path, codec: &str) -> Result<Child, SourceError> {
    cmd.stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .map_err(|e| SourceError::NeedsDecoder {
            path: path.display().to_string(),
            codec: codec.to_string(),
            advice: format!("cannot start ffmpeg ({e}); {}", super::INSTALL_FFMPEG),
        })
}

/// Read an ffmpeg's stderr: timing lines go to `stamps` (when given), the last few lines that look
/// like problems to `problems`.
fn spawn_stderr_reader(
    err: ChildStderr,
    stamps: Option<Sender<ErrMsg>>,
    problems: Arc<Mutex<VecDeque<String>>>,
) -> JoinHandle<()> {
    std::thread::spawn(move || {
        for line in BufReader::new(err).lines() {
            let Ok(line) = line else { break };
            if let Some(m) = parse_stderr_line(&line) {
                if stamps.as_ref().is_some_and(|tx| tx.send(m).is_err()) {
                    break;
                }
            } else if looks_like_problem(&line) {
                if let Ok(mut q) = problems.lock() {
                    if q.len() >= 6 {
                        q.pop_front();
                    }
                    q.push_back(line.trim().to_string());
                }
            }
        }
    })
}

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
    stamps: Receiver<ErrMsg>,
    problems: Arc<Mutex<VecDeque<String>>>,
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

impl FfmpegSource {
    pub fn open(path: &Path, opts: &OpenOptions) -> Result<Self, SourceError> {
        if !path.is_file() {
            return Err(SourceError::Missing {
                path: path.display().to_string(),
            });
        }
        if !ffmpeg_available() {
            return Err(SourceError::NeedsDecoder {
                path: path.display().to_string(),
                codec: "video".into(),
                advice: format!(
                    "ffmpeg and ffprobe are not on PATH; {}",
                    super::INSTALL_FFMPEG
                ),
            });
        }
        let p = probe(path)?;
        let (plan, reorders, ends_early) = match opts.every {
            Some(e) => match plan_key_frames(path, &p, e)? {
                Some(k) => {
                    // Decoding only key frames never reads the missing end of a cut-off file, so
                    // the index is what tells.
                    let short = keyplan::short_file(p.nb_frames, k.packets);
                    (Some(k.kept), k.reorders, short)
                }
                None => (None, false, None),
            },
            None => (None, false, None),
        };
        let transfer = Transfer::choose(&p, opts.channel);
        // A rectangle that does not fit is not cut; the caller sees `info.crop == None`.
        let crop = opts.crop.filter(|r| r.fits_in(p.width, p.height));
        let (filters, pix_fmt) = transfer.ffmpeg_output(crop);
        let problems = Arc::new(Mutex::new(VecDeque::new()));
        // Key frames only: a first ffmpeg passes just the key-frame packets on (no decoding), so the
        // decoder sees an all-intra stream and its frame threads decode pictures side by side; told
        // to skip the other frames itself, one decoder works through them one at a time. Streams
        // with B-frames take the slower way: their times do not survive the copy.
        let mut demuxer = None;
        let mut demuxer_reader = None;
        let mut cmd = Command::new("ffmpeg");
        cmd.args(["-hide_banner", "-nostdin", "-nostats", "-loglevel", "info"]);
        if plan.is_some() && reorders {
            cmd.args(["-skip_frame", "nokey", "-noautorotate", "-i"])
                .arg(path);
            cmd.stdin(Stdio::null());
        } else if plan.is_some() {
            let mut d = Command::new("ffmpeg");
            d.args(["-hide_banner", "-nostdin", "-nostats", "-loglevel", "error"])
                .args(["-discard", "nokey", "-noautorotate", "-i"])
                .arg(path)
                .args([
                    "-map", "0:v:0", "-c", "copy", "-copyts", "-f", "nut", "pipe:1",
                ])
                .stdin(Stdio::null());
            let mut d = spawn_ffmpeg(&mut d, path, &p.codec)?;
            let packets = d.stdout.take();
            demuxer_reader = d
                .stderr
                .take()
                .map(|err| spawn_stderr_reader(err, None, problems.clone()));
            demuxer = Some(d);
            cmd.args(["-skip_frame", "nokey", "-f", "nut", "-i", "pipe:0"]);
            cmd.stdin(packets.map_or_else(Stdio::null, Stdio::from));
        } else {
            cmd.arg("-noautorotate").arg("-i").arg(path);
            cmd.stdin(Stdio::null());
        }
        // `-copyts`: the times showinfo reports are the file's own, so they count from the stream's
        // first timestamp as ffprobe reported it, wherever the file starts.
        cmd.args([
            "-copyts",
            "-map",
            "0:v:0",
            "-an",
            "-sn",
            "-dn",
            "-vf",
            &filters,
            "-vsync",
            "passthrough",
            "-f",
            "rawvideo",
            "-pix_fmt",
            pix_fmt,
            "pipe:1",
        ]);
        let mut child = spawn_ffmpeg(&mut cmd, path, &p.codec)?;
        drop(cmd);
        let expected = keyplan::expected_frames(
            plan.as_ref().map(VecDeque::len),
            opts.every,
            p.duration,
            p.nb_frames,
            p.fps,
        );
        let info = SourceInfo {
            description: super::video_description(
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
        let pipe_reader = child.stdout.take().map(|out| {
            widen_pipe(&out);
            spawn_pipe_reader(out, frame_bytes, spare_rx, pictures_tx)
        });
        let (tx, rx) = channel();
        let reader = child
            .stderr
            .take()
            .map(|err| spawn_stderr_reader(err, Some(tx), problems.clone()));
        Ok(Self {
            info,
            path: path.to_path_buf(),
            time_base: p.time_base,
            pick: Picker::new(opts.every, plan, p.start_pts, p.time_base),
            probe: p,
            child: Some(child),
            demuxer,
            demuxer_reader,
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
    fn next_picture(&mut self) -> Result<Option<Vec<u8>>, String> {
        let Some(pictures) = self.pictures.as_ref() else {
            return Ok(None);
        };
        match pictures.recv() {
            Ok(Piece::Picture(b)) => Ok(Some(b)),
            Ok(Piece::Partial(n)) => Err(format!(
                "the last frame arrived incomplete ({n} of {} bytes)",
                self.frame_bytes
            )),
            Ok(Piece::Failed(e)) => Err(e),
            Err(_) => Ok(None),
        }
    }

    /// Hand a picture buffer back to the pipe reader.
    fn give_back(&self, bytes: Vec<u8>) {
        if bytes.len() == self.frame_bytes {
            let _ = self.spare.send(bytes);
        }
    }

    fn next_pts(&mut self) -> Option<i64> {
        loop {
            match self.stamps.recv() {
                Ok(ErrMsg::TimeBase(a, b)) => self.time_base = (a, b),
                Ok(ErrMsg::Pts(p)) => return p,
                Err(_) => return None,
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

    fn plane(&self, bytes: Vec<u8>) -> Result<Plane, PlaneSizeError> {
        let (w, h) = self.info.plane_size();
        match self.transfer {
            Transfer::LumaPlane { widen: true } => Plane::from_studio_luma_vec(w, h, bytes),
            Transfer::LumaPlane { widen: false } => Plane::from_u8_vec(w, h, bytes),
            Transfer::Gray => Plane::from_u8_vec(w, h, bytes),
            Transfer::Rgb => {
                let plane = super::pixels::plane_from_rgb24(w, h, &bytes, self.channel);
                self.give_back(bytes);
                Ok(plane)
            }
        }
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

    fn finish(&mut self, read_error: Option<String>) -> Option<Result<Delivery, SourceError>> {
        self.done = true;
        let status = self.shut_down(false);
        let problems: Vec<String> = self
            .problems
            .lock()
            .map(|q| q.iter().cloned().collect())
            .unwrap_or_default();
        let failed = status.is_some_and(|s| !s.success());
        let missing_planned = self.pick.planned_left();
        let read_error = read_error.or_else(|| self.ends_early.take());
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
            let Some(pts) = self.next_pts() else {
                return self.finish(Some(
                    "a frame arrived without its timestamp from the showinfo filter".into(),
                ));
            };
            let ticks = self.probe_ticks(pts);
            let (t, index) = self.pick.pick(ticks, &self.path, &mut self.pending);
            let Some(index) = index else {
                self.give_back(bytes);
                continue;
            };
            let plane = match self.plane(bytes) {
                Ok(p) => p,
                Err(e) => return self.finish(Some(e.to_string())),
            };
            self.pending.push_back(Delivery::Frame(super::video_frame(
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
