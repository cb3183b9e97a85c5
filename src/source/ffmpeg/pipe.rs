//! The pipe reader: a thread that drains ffmpeg's stdout one raw picture at a time into a few
//! recycled buffers, so decoding and tracking overlap and memory stays flat.

use std::io::Read;
use std::process::ChildStdout;
use std::sync::mpsc::{Receiver, RecvTimeoutError, SyncSender};
use std::sync::OnceLock;
use std::thread::JoinHandle;
use std::time::Duration;

/// Decoded pictures waiting in the pipe reader's queue: enough to ride over a slow frame on either
/// side, few enough that memory does not grow with the run.
pub(super) const QUEUED_PICTURES: usize = 3;

/// Pipe buffer asked for on Linux (the default 64 KiB makes a 1080p frame take 32 round trips).
#[cfg(target_os = "linux")]
const PIPE_BYTES: i32 = 1 << 20;

/// The environment variable that sets how long ffmpeg or ffprobe may send nothing before it is
/// stopped, seconds.
pub(crate) const STALL_ENV: &str = "SPOTLEVER_FFMPEG_STALL_S";
/// Default of [`STALL_ENV`]: far longer than decoding one picture of any video takes (common
/// practice, no source), short enough that a stuck run is noticed.
const DEFAULT_STALL_S: f64 = 30.0;

/// How long the ffmpeg programs may stay silent before they are stopped.
pub(crate) fn stall_limit() -> Duration {
    static LIMIT: OnceLock<Duration> = OnceLock::new();
    *LIMIT.get_or_init(|| {
        let s = std::env::var(STALL_ENV)
            .ok()
            .and_then(|v| v.trim().parse::<f64>().ok())
            .filter(|s| s.is_finite() && *s > 0.0)
            .unwrap_or(DEFAULT_STALL_S);
        Duration::from_secs_f64(s.min(1e6))
    })
}

/// The next message on `queue`, waiting at most [`stall_limit`]: `Err(Some(seconds))` on a stall,
/// `Err(None)` when the sender has gone.
pub(super) fn receive<T>(queue: &Receiver<T>) -> Result<T, Option<f64>> {
    let limit = stall_limit();
    queue.recv_timeout(limit).map_err(|e| match e {
        RecvTimeoutError::Timeout => Some(limit.as_secs_f64()),
        RecvTimeoutError::Disconnected => None,
    })
}

/// What the pipe reader hands over, in order; the channel closing means the pipe ended cleanly.
pub(super) enum Piece {
    Picture(Vec<u8>),
    /// The pipe ended inside a picture, after this many of its bytes.
    Partial(usize),
    Failed(std::io::Error),
}

/// Fill `buf` from `out`: the piece it makes, or `None` when the pipe ended before its first byte.
fn read_piece(out: &mut impl Read, mut buf: Vec<u8>) -> Option<Piece> {
    let frame_bytes = buf.len();
    let mut filled = 0;
    while filled < frame_bytes {
        match out.read(&mut buf[filled..]) {
            Ok(0) => break,
            Ok(n) => filled += n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
            Err(e) => return Some(Piece::Failed(e)),
        }
    }
    match filled {
        0 => None,
        n if n < frame_bytes => Some(Piece::Partial(n)),
        _ => Some(Piece::Picture(buf)),
    }
}

/// Drain ffmpeg's stdout one picture at a time into `frame_bytes` buffers (taken from `spare` when
/// one has come back, else new), passing each through the bounded `pictures` queue.
pub(super) fn spawn_pipe_reader(
    mut out: ChildStdout,
    frame_bytes: usize,
    spare: Receiver<Vec<u8>>,
    pictures: SyncSender<Piece>,
) -> JoinHandle<()> {
    std::thread::spawn(move || loop {
        let buf = match spare.try_recv() {
            Ok(b) if b.len() == frame_bytes => b,
            _ => vec![0; frame_bytes],
        };
        let Some(piece) = read_piece(&mut out, buf) else {
            return;
        };
        let more = matches!(piece, Piece::Picture(_));
        if pictures.send(piece).is_err() || !more {
            return;
        }
    })
}

/// Ask for a larger pipe buffer, so a picture crosses in a few large copies (Linux only; a refusal
/// only costs speed).
pub(super) fn widen_pipe(out: &ChildStdout) {
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

#[cfg(test)]
mod tests {
    use super::*;

    /// A reader that hands out its bytes a few at a time, as a pipe does.
    struct Trickle(Vec<u8>, usize);

    impl Read for Trickle {
        fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
            let n = buf.len().min(self.1).min(self.0.len());
            buf[..n].copy_from_slice(&self.0[..n]);
            self.0.drain(..n);
            Ok(n)
        }
    }

    #[test]
    fn whole_pictures_then_a_partial_one_then_the_end() {
        let mut out = Trickle((0..10).collect(), 3);
        let p = read_piece(&mut out, vec![0; 4]);
        assert!(matches!(p, Some(Piece::Picture(b)) if b == [0, 1, 2, 3]));
        let p = read_piece(&mut out, vec![9; 4]);
        assert!(matches!(p, Some(Piece::Picture(b)) if b == [4, 5, 6, 7]));
        assert!(matches!(
            read_piece(&mut out, vec![0; 4]),
            Some(Piece::Partial(2))
        ));
        assert!(read_piece(&mut out, vec![0; 4]).is_none());
    }
}
