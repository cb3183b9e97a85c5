//! What `ffprobe` says about a video before decoding: the first video stream's facts ([`Probe`])
//! and, for a key-frame-only decode, the packet index (read without decoding).

use super::super::keyplan::{self, KeyFramePlan, PacketFacts};
use super::super::{SourceError, INSTALL_FFMPEG};
use super::pipe::{receive, stall_limit, STALL_ENV};
use crate::error::IoError;
use crate::units::Seconds;
use std::io::{BufRead, BufReader, Read};
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

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
#[derive(Debug, Clone, Default, PartialEq)]
pub(super) struct Probe {
    pub codec: String,
    pub width: usize,
    pub height: usize,
    pub time_base: (i64, i64),
    pub start_pts: i64,
    pub nb_frames: Option<u64>,
    pub duration: Option<f64>,
    pub fps: Option<f64>,
    pub pix_fmt: String,
    pub color_range: String,
}

/// `a/b` as a pair of integers, `None` unless both parse and `b` is not 0.
pub(super) fn ratio(s: &str) -> Option<(i64, i64)> {
    let (a, b) = s.split_once('/')?;
    let (a, b) = (a.trim().parse().ok()?, b.trim().parse().ok()?);
    (b != 0).then_some((a, b))
}

fn run_tool(path: &Path, tool: &str, args: &[&str]) -> Result<String, SourceError> {
    let mut cmd = Command::new(tool);
    cmd.args(args).arg(path);
    let out = output_within(&mut cmd, stall_limit())
        .map_err(|e| SourceError::NeedsDecoder {
            path: path.display().to_string(),
            codec: "video".into(),
            advice: format!("cannot run {tool} ({e}); {INSTALL_FFMPEG}"),
        })?
        .ok_or_else(|| SourceError::Decode {
            origin: path.display().to_string(),
            message: format!(
                "{tool} gave no answer within {} s and was stopped; check the file is a video on a \
                 readable disk, or set {STALL_ENV} to wait longer",
                stall_limit().as_secs_f64()
            ),
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

/// Run `cmd` to its end with its output collected, as `Command::output` does, but kill it and return
/// `None` when it has not ended within `limit`.
fn output_within(cmd: &mut Command, limit: Duration) -> std::io::Result<Option<Output>> {
    let mut child = cmd
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()?;
    let drain = |r: Option<Box<dyn Read + Send>>| {
        std::thread::spawn(move || {
            let mut bytes = Vec::new();
            if let Some(mut r) = r {
                let _ = r.read_to_end(&mut bytes);
            }
            bytes
        })
    };
    let out = drain(
        child
            .stdout
            .take()
            .map(|r| Box::new(r) as Box<dyn Read + Send>),
    );
    let err = drain(
        child
            .stderr
            .take()
            .map(|r| Box::new(r) as Box<dyn Read + Send>),
    );
    let deadline = Instant::now() + limit;
    let status = loop {
        if let Some(s) = child.try_wait()? {
            break s;
        }
        if Instant::now() >= deadline {
            let _ = child.kill();
            let _ = child.wait();
            return Ok(None);
        }
        std::thread::sleep(Duration::from_millis(10));
    };
    Ok(Some(Output {
        status,
        stdout: out.join().unwrap_or_default(),
        stderr: err.join().unwrap_or_default(),
    }))
}

/// The stream's facts from `ffprobe`'s `key=value` lines; a fact missing or unreadable keeps its
/// default (time base 1/1).
fn parse_probe(text: &str) -> Probe {
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
    p
}

/// Ask `ffprobe` about the first video stream of `path`.
pub(super) fn probe(path: &Path) -> Result<Probe, SourceError> {
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
    let p = parse_probe(&text);
    if p.codec.is_empty() || p.width == 0 || p.height == 0 {
        return Err(SourceError::Decode {
            origin: path.display().to_string(),
            message: "ffprobe finds no video stream in this file".into(),
        });
    }
    Ok(p)
}

/// One packet of `ffprobe`'s `pts,dts,flags` listing; `None` for a line with fewer cells.
fn parse_packet_line(line: &str) -> Option<PacketFacts> {
    let mut cells = line.split(',');
    let (pts, dts, flags) = (cells.next()?, cells.next()?, cells.next()?);
    Some(PacketFacts {
        pts: pts.trim().parse().ok(),
        dts: dts.trim().parse().ok(),
        key: flags.contains('K'),
        discard: flags.contains('D'),
    })
}

/// Plan a key-frame-only decode from the packet index that `ffprobe` lists (without decoding);
/// `None` when a full decode is needed.
pub(super) fn plan_key_frames(
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
    // The lines come through a bounded queue so that a silent ffprobe is noticed (memory stays flat:
    // the reader waits while the queue is full).
    let (tx, rx) = std::sync::mpsc::sync_channel(1024);
    std::thread::spawn(move || {
        for line in BufReader::new(out).lines().map_while(Result::ok) {
            if tx.send(line).is_err() {
                return;
            }
        }
    });
    let mut stalled = None;
    let facts = std::iter::from_fn(|| match receive(&rx) {
        Ok(line) => Some(line),
        Err(s) => {
            stalled = s;
            None
        }
    })
    .filter_map(|line| parse_packet_line(&line));
    let planned = keyplan::plan(facts, p.start_pts, p.time_base, every);
    let _ = child.kill();
    let _ = child.wait();
    if let Some(seconds) = stalled {
        return Err(SourceError::Decode {
            origin: path.display().to_string(),
            message: format!(
                "ffprobe sent nothing for {seconds} s while listing the packets and was stopped; \
                 set {STALL_ENV} to wait longer"
            ),
        });
    }
    Ok(planned)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ratios_need_two_integers_and_a_non_zero_denominator() {
        assert_eq!(ratio("1/90000"), Some((1, 90000)));
        assert_eq!(ratio(" 30000 / 1001 "), Some((30000, 1001)));
        assert_eq!(ratio("0/0"), None);
        assert_eq!(ratio("25"), None);
        assert_eq!(ratio("a/b"), None);
    }

    #[test]
    fn probe_text_gives_the_stream_facts() {
        let text = "codec_name=h264\nwidth=640\nheight=480\ntime_base=1/12800\nstart_pts=512\n\
                    avg_frame_rate=25/1\nnb_frames=250\nduration=10.000000\npix_fmt=yuvj420p\n\
                    color_range=pc\nduration=10.040000\n";
        let p = parse_probe(text);
        assert_eq!(
            p,
            Probe {
                codec: "h264".into(),
                width: 640,
                height: 480,
                time_base: (1, 12800),
                start_pts: 512,
                nb_frames: Some(250),
                // The stream's duration comes first; the container's after it is not taken.
                duration: Some(10.0),
                fps: Some(25.0),
                pix_fmt: "yuvj420p".into(),
                color_range: "pc".into(),
            }
        );
    }

    #[test]
    fn unknown_or_missing_probe_facts_keep_their_defaults() {
        let p = parse_probe("codec_name=vp9\nwidth=N/A\ntime_base=1/0\nnb_frames=N/A\navg_frame_rate=0/0\nduration=N/A\nduration=3.5\nno line\n");
        assert_eq!(p.codec, "vp9");
        assert_eq!((p.width, p.height), (0, 0));
        assert_eq!(p.time_base, (1, 1));
        assert_eq!((p.nb_frames, p.fps), (None, None));
        assert_eq!(p.duration, Some(3.5));
    }

    #[test]
    fn packet_lines_give_times_and_flags() {
        let k = parse_packet_line("1024,512,K__").unwrap();
        assert_eq!(
            (k.pts, k.dts, k.key, k.discard),
            (Some(1024), Some(512), true, false)
        );
        let d = parse_packet_line("N/A,0,_D_").unwrap();
        assert_eq!(
            (d.pts, d.dts, d.key, d.discard),
            (None, Some(0), false, true)
        );
        assert!(parse_packet_line("1024,512").is_none());
    }
}
