//! Video files through the `ffmpeg` program: `ffprobe` for the stream's facts, then `ffmpeg` decoding
//! to raw 8-bit planes on a pipe, one frame at a time, never the whole video in memory.
//!
//! Presentation times are exact: the `showinfo` filter reports every frame's integer timestamp and
//! time base on stderr, in the same order as the frames on the pipe, and frames pass through without
//! being duplicated or dropped (`-vsync passthrough`). With `--every`, when the first frame of every
//! interval is a key frame (checked from the packet index with `ffprobe`, without decoding), the
//! decoder skips all other frames (`-skip_frame nokey`) and the kept frames are the same ones a full
//! decode would keep.

use super::thin::Thinner;
use super::{Delivery, FrameSource, OpenOptions, SourceError, SourceInfo};
use crate::frame::{Channel, Frame, Plane};
use crate::units::Seconds;
use std::cmp::Reverse;
use std::collections::{BinaryHeap, VecDeque};
use std::io::{BufRead, BufReader, Read};
use std::path::{Path, PathBuf};
use std::process::{Child, ChildStdout, Command, Stdio};
use std::sync::mpsc::{channel, Receiver};
use std::sync::{Arc, Mutex};
use std::thread::JoinHandle;

/// Packets held back to put decode order into presentation order (H.264 and HEVC reorder by at
/// most 16 frames; common practice, no source).
const REORDER_WINDOW: usize = 64;

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
            "stream=codec_name,width,height,time_base,start_pts,nb_frames,avg_frame_rate,duration:format=duration",
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

/// Seconds of a timestamp relative to the stream start.
fn seconds(pts: i64, start: i64, tb: (i64, i64)) -> Seconds {
    Seconds((pts - start) as f64 * tb.0 as f64 / tb.1 as f64)
}

/// Frames a key-frame-only decode keeps, `(pts, index in presentation order)`; `None` when some
/// interval's first frame is not a key frame (or timestamps are missing), so a full decode is needed.
fn plan_key_frames(
    path: &Path,
    p: &Probe,
    every: Seconds,
) -> Result<Option<VecDeque<(i64, u64)>>, SourceError> {
    let mut child = Command::new("ffprobe")
        .args([
            "-v",
            "error",
            "-select_streams",
            "v:0",
            "-show_entries",
            "packet=pts,flags",
            "-of",
            "csv=p=0",
        ])
        .arg(path)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .map_err(|source| SourceError::Io {
            path: path.display().to_string(),
            source,
        })?;
    let Some(out) = child.stdout.take() else {
        return Ok(None);
    };
    let mut heap: BinaryHeap<Reverse<(i64, bool)>> = BinaryHeap::new();
    let mut thin = Thinner::new(Some(every));
    let mut kept = VecDeque::new();
    let mut index = 0u64;
    let mut ok = true;
    let mut visit = |pts: i64, key: bool, ok: &mut bool| {
        if thin.keep(seconds(pts, p.start_pts, p.time_base)) {
            if !key {
                *ok = false;
            }
            kept.push_back((pts, index));
        }
        index += 1;
    };
    for line in BufReader::new(out).lines() {
        let Ok(line) = line else { break };
        let mut cells = line.split(',');
        let (Some(pts), Some(flags)) = (cells.next(), cells.next()) else {
            continue;
        };
        if flags.contains('D') {
            continue;
        }
        let Ok(pts) = pts.trim().parse::<i64>() else {
            ok = false;
            break;
        };
        heap.push(Reverse((pts, flags.contains('K'))));
        if heap.len() > REORDER_WINDOW {
            if let Some(Reverse((t, k))) = heap.pop() {
                visit(t, k, &mut ok);
            }
        }
        if !ok {
            break;
        }
    }
    while ok {
        let Some(Reverse((t, k))) = heap.pop() else {
            break;
        };
        visit(t, k, &mut ok);
    }
    let _ = child.kill();
    let _ = child.wait();
    Ok(ok.then_some(kept))
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

/// A video decoded by the `ffmpeg` program.
pub struct FfmpegSource {
    info: SourceInfo,
    path: PathBuf,
    probe: Probe,
    child: Option<Child>,
    stdout: Option<ChildStdout>,
    stamps: Receiver<ErrMsg>,
    problems: Arc<Mutex<VecDeque<String>>>,
    reader: Option<JoinHandle<()>>,
    time_base: (i64, i64),
    channel: Channel,
    buf: Vec<u8>,
    thin: Thinner,
    plan: Option<VecDeque<(i64, u64)>>,
    pending: VecDeque<Delivery>,
    decoded: u64,
    last_t: f64,
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
        let plan = match opts.every {
            Some(e) => plan_key_frames(path, &p, e)?,
            None => None,
        };
        let rgb = opts.channel != Channel::Luma;
        let mut cmd = Command::new("ffmpeg");
        cmd.args(["-hide_banner", "-nostdin", "-nostats", "-loglevel", "info"]);
        if plan.is_some() {
            cmd.args(["-skip_frame", "nokey"]);
        }
        cmd.arg("-noautorotate").arg("-i").arg(path);
        cmd.args([
            "-map",
            "0:v:0",
            "-an",
            "-sn",
            "-dn",
            "-vf",
            "showinfo",
            "-vsync",
            "passthrough",
            "-f",
            "rawvideo",
            "-pix_fmt",
            if rgb { "rgb24" } else { "gray" },
            "pipe:1",
        ]);
        let mut child = cmd
            .stdin(Stdio::null())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .map_err(|e| SourceError::NeedsDecoder {
                path: path.display().to_string(),
                codec: p.codec.clone(),
                advice: format!("cannot start ffmpeg ({e}); {}", super::INSTALL_FFMPEG),
            })?;
        let stdout = child.stdout.take();
        let stderr = child.stderr.take();
        let (tx, rx) = channel();
        let problems = Arc::new(Mutex::new(VecDeque::new()));
        let sink = problems.clone();
        let reader = stderr.map(|err| {
            std::thread::spawn(move || {
                for line in BufReader::new(err).lines() {
                    let Ok(line) = line else { break };
                    if let Some(m) = parse_stderr_line(&line) {
                        if tx.send(m).is_err() {
                            break;
                        }
                    } else if looks_like_problem(&line) {
                        if let Ok(mut q) = sink.lock() {
                            if q.len() >= 6 {
                                q.pop_front();
                            }
                            q.push_back(line.trim().to_string());
                        }
                    }
                }
            })
        });
        let expected = match (&plan, opts.every) {
            (Some(k), _) => Some(k.len() as u64),
            (None, Some(e)) => p.duration.map(|d| (d / e.0).ceil() as u64),
            (None, None) => p
                .nb_frames
                .or_else(|| Some((p.duration? * p.fps?).round() as u64)),
        };
        let name = path
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default();
        let info = SourceInfo {
            description: format!(
                "{name}: {} {}x{}, decoded by ffmpeg{}",
                p.codec,
                p.width,
                p.height,
                if plan.is_some() {
                    ", key frames only"
                } else {
                    ""
                }
            ),
            width: p.width,
            height: p.height,
            expected_frames: expected,
        };
        let frame_bytes = p.width * p.height * if rgb { 3 } else { 1 };
        Ok(Self {
            info,
            path: path.to_path_buf(),
            time_base: p.time_base,
            probe: p,
            child: Some(child),
            stdout,
            stamps: rx,
            problems,
            reader,
            channel: opts.channel,
            buf: vec![0; frame_bytes],
            thin: Thinner::new(opts.every),
            plan,
            pending: VecDeque::new(),
            decoded: 0,
            last_t: 0.0,
            done: false,
        })
    }

    /// Whether only key frames are decoded.
    pub fn key_frames_only(&self) -> bool {
        self.plan.is_some()
    }

    /// Fill the buffer with the next frame's bytes: Ok(true) full frame, Ok(false) clean end.
    fn read_frame(&mut self) -> Result<bool, String> {
        let Some(out) = self.stdout.as_mut() else {
            return Ok(false);
        };
        let mut filled = 0;
        while filled < self.buf.len() {
            match out.read(&mut self.buf[filled..]) {
                Ok(0) => break,
                Ok(n) => filled += n,
                Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
                Err(e) => return Err(e.to_string()),
            }
        }
        if filled == 0 {
            Ok(false)
        } else if filled < self.buf.len() {
            Err(format!(
                "the last frame arrived incomplete ({filled} of {} bytes)",
                self.buf.len()
            ))
        } else {
            Ok(true)
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

    fn t_of(&self, pts: i64) -> Seconds {
        let start_s = self.probe.start_pts as f64 * self.probe.time_base.0 as f64
            / self.probe.time_base.1 as f64;
        if self.time_base == self.probe.time_base {
            seconds(pts, self.probe.start_pts, self.time_base)
        } else {
            Seconds(pts as f64 * self.time_base.0 as f64 / self.time_base.1 as f64 - start_s)
        }
    }

    fn plane(&self) -> Plane {
        let (w, h) = (self.info.width, self.info.height);
        if self.channel == Channel::Luma {
            Plane::from_u8(w, h, &self.buf)
        } else {
            super::pixels::plane_from_rgb24(w, h, &self.buf, self.channel)
        }
    }

    fn finish(&mut self, read_error: Option<String>) -> Option<Result<Delivery, SourceError>> {
        self.done = true;
        self.stdout = None;
        let status = self.child.take().and_then(|mut c| c.wait().ok());
        if let Some(r) = self.reader.take() {
            let _ = r.join();
        }
        let problems: Vec<String> = self
            .problems
            .lock()
            .map(|q| q.iter().cloned().collect())
            .unwrap_or_default();
        let failed = status.is_some_and(|s| !s.success());
        let missing_planned = self.plan.as_ref().is_some_and(|p| !p.is_empty());
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
        let origin = self.path.display().to_string();
        if self.decoded == 0 {
            return Some(Err(SourceError::Decode {
                origin,
                message: format!("no frame could be decoded ({message})"),
            }));
        }
        Some(Err(SourceError::Truncated {
            origin,
            frames: self.decoded,
            t_s: self.last_t,
            message,
        }))
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
            match self.read_frame() {
                Ok(true) => {}
                Ok(false) => return self.finish(None),
                Err(e) => return self.finish(Some(e)),
            }
            let Some(pts) = self.next_pts() else {
                return self.finish(Some(
                    "a frame arrived without its timestamp from the showinfo filter".into(),
                ));
            };
            let t = self.t_of(pts);
            let origin = format!("frame at t = {:.3} s of {}", t.0, self.path.display());
            let index = match self.plan.as_mut() {
                None => {
                    let i = self.decoded;
                    self.decoded += 1;
                    self.last_t = t.0;
                    if !self.thin.keep(t) {
                        continue;
                    }
                    i
                }
                Some(plan) => {
                    // Planned key frames the decoder skipped are reported, then this one is matched.
                    while plan.front().is_some_and(|&(p, _)| p < pts) {
                        if let Some((p, i)) = plan.pop_front() {
                            let tt = seconds(p, self.probe.start_pts, self.probe.time_base);
                            self.pending.push_back(Delivery::Unreadable {
                                index: i,
                                t: tt,
                                origin: format!("frame {i} of {}", self.path.display()),
                                reason: "the decoder returned no picture for this key frame".into(),
                            });
                        }
                    }
                    match plan.front() {
                        Some(&(p, i)) if p == pts => {
                            plan.pop_front();
                            self.decoded = i + 1;
                            self.last_t = t.0;
                            i
                        }
                        _ => continue,
                    }
                }
            };
            let frame = Frame {
                index,
                t,
                plane: self.plane(),
                origin: origin.replacen("frame at", &format!("frame {index} at"), 1),
            };
            self.pending.push_back(Delivery::Frame(frame));
        }
    }
}

impl Drop for FfmpegSource {
    fn drop(&mut self) {
        self.stdout = None;
        if let Some(mut c) = self.child.take() {
            let _ = c.kill();
            let _ = c.wait();
        }
        if let Some(r) = self.reader.take() {
            let _ = r.join();
        }
    }
}
