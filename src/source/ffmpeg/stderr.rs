//! Reading an ffmpeg's stderr: the `showinfo` filter's timing lines (each frame's timestamp and the
//! time base they count in, in the order of the frames on the pipe), and the last few lines that
//! look like problems, for the message when decoding stops early.

use super::probe::ratio;
use std::collections::VecDeque;
use std::io::{BufRead, BufReader};
use std::process::ChildStderr;
use std::sync::mpsc::Sender;
use std::sync::{Arc, Mutex};
use std::thread::JoinHandle;

/// How many problem lines are kept (the last ones).
const KEPT_PROBLEMS: usize = 6;

/// A timing fact the `showinfo` filter reports on stderr.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum TimingNote {
    /// The time base of the timestamps that follow, as `(numerator, denominator)`.
    TimeBase(i64, i64),
    /// The next frame's timestamp (`None` when showinfo printed one that is not a number).
    Pts(Option<i64>),
}

/// The timing fact on one stderr line, if it is a `showinfo` timing line.
pub(super) fn parse_stderr_line(line: &str) -> Option<TimingNote> {
    if !line.contains("Parsed_showinfo") {
        return None;
    }
    if let Some(rest) = line.split("config in time_base:").nth(1) {
        let tb = rest.split(',').next()?;
        let (a, b) = ratio(tb)?;
        return Some(TimingNote::TimeBase(a, b));
    }
    if line.contains(" n:") {
        let rest = line.split(" pts:").nth(1)?;
        let tok = rest.split_whitespace().next()?;
        return Some(TimingNote::Pts(tok.parse().ok()));
    }
    None
}

/// Whether a stderr line (not one of showinfo's) looks like ffmpeg reporting a problem.
pub(super) fn looks_like_problem(line: &str) -> bool {
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

/// Read an ffmpeg's stderr: timing lines go to `stamps` (when given), the last few lines that look
/// like problems to `problems`.
pub(super) fn spawn_stderr_reader(
    err: ChildStderr,
    stamps: Option<Sender<TimingNote>>,
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
                    if q.len() >= KEPT_PROBLEMS {
                        q.pop_front();
                    }
                    q.push_back(line.trim().to_string());
                }
            }
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    // Lines as ffmpeg's showinfo filter prints them (shortened after the fields read here).
    const CONFIG: &str =
        "[Parsed_showinfo_0 @ 0x55d1c0] config in time_base: 1/12800, frame_rate: 25/1";
    const FRAME: &str =
        "[Parsed_showinfo_0 @ 0x55d1c0] n:   3 pts:   1536 pts_time:0.12    duration:    512";

    #[test]
    fn showinfo_lines_give_the_time_base_and_each_timestamp() {
        assert_eq!(
            parse_stderr_line(CONFIG),
            Some(TimingNote::TimeBase(1, 12800))
        );
        assert_eq!(parse_stderr_line(FRAME), Some(TimingNote::Pts(Some(1536))));
        let no_pts = "[Parsed_showinfo_0 @ 0x1] n:   0 pts:NOPTS pts_time:NOPTS";
        assert_eq!(parse_stderr_line(no_pts), Some(TimingNote::Pts(None)));
    }

    #[test]
    fn other_lines_carry_no_timing() {
        assert_eq!(
            parse_stderr_line("frame=   10 fps=0.0 q=-0.0 size=N/A"),
            None
        );
        assert_eq!(
            parse_stderr_line("n:   3 pts:   1536 (not from showinfo)"),
            None
        );
        let bad_tb = "[Parsed_showinfo_0 @ 0x1] config in time_base: 1/0, frame_rate: 25/1";
        assert_eq!(parse_stderr_line(bad_tb), None);
        let other = "[Parsed_showinfo_0 @ 0x1] color_range:tv color_space:bt709";
        assert_eq!(parse_stderr_line(other), None);
    }

    #[test]
    fn problem_lines_are_told_from_showinfo_and_progress() {
        assert!(looks_like_problem("[mov,mp4 @ 0x1] moov atom not found"));
        assert!(looks_like_problem(
            "[h264 @ 0x1] Invalid NAL unit size (1234 > 567)."
        ));
        assert!(looks_like_problem("Error while decoding stream #0:0"));
        assert!(!looks_like_problem("frame=   10 fps=0.0 q=-0.0 size=N/A"));
        assert!(!looks_like_problem(
            "[Parsed_showinfo_0 @ 0x1] n: 1 pts: 2 error"
        ));
    }
}
