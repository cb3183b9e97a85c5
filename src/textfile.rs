//! Reading text inputs (setup, calibration, events, point pairs, trials, track files) safely: a
//! FIFO or device is refused by name instead of blocking or being read without end, a whole-file
//! input is capped in size, a track is capped in line length, and a UTF-8 byte-order mark is dropped.
//!
//! The caps are far above any real input of this kind (common practice, no source) and can be raised
//! through `SPOTLEVER_MAX_TEXT_MB` (whole files) and `SPOTLEVER_MAX_LINE_KB` (one line).

use crate::error::IoError;
use std::fs::File;
use std::io::{self, BufRead, Read};
use std::path::Path;

/// Default cap of a whole-file text input, MiB.
pub const DEFAULT_MAX_TEXT_MB: u64 = 16;
/// Default cap of one line of a line-by-line text input, KiB.
pub const DEFAULT_MAX_LINE_KB: u64 = 64;
/// The environment variable that raises the whole-file cap (in MiB).
pub const MAX_TEXT_ENV: &str = "SPOTLEVER_MAX_TEXT_MB";
/// The environment variable that raises the line cap (in KiB).
pub const MAX_LINE_ENV: &str = "SPOTLEVER_MAX_LINE_KB";

fn limit(env: &str, default: u64) -> u64 {
    std::env::var(env)
        .ok()
        .and_then(|v| v.trim().parse::<u64>().ok())
        .filter(|&v| v > 0)
        .unwrap_or(default)
}

fn refused(path: &Path, message: String) -> IoError {
    IoError {
        path: path.to_path_buf(),
        source: io::Error::new(io::ErrorKind::InvalidInput, message),
    }
}

/// Open `path` for reading if it is a regular file; a FIFO, device, socket or folder is refused
/// with what it is (reading one could block or never end).
pub fn open_regular(path: &Path) -> Result<(File, u64), IoError> {
    let meta = std::fs::metadata(path).map_err(IoError::at(path))?;
    if !meta.is_file() {
        let what = crate::outfile::file_type_name(&meta);
        return Err(refused(
            path,
            format!("is {what}, not a regular file; save the text to a file and give that file"),
        ));
    }
    let file = File::open(path).map_err(IoError::at(path))?;
    Ok((file, meta.len()))
}

/// The whole text of `path` (without a leading byte-order mark), refused when it is not a regular
/// file or larger than the cap.
pub fn read_text(path: &Path) -> Result<String, IoError> {
    let max_mb = limit(MAX_TEXT_ENV, DEFAULT_MAX_TEXT_MB);
    let cap = max_mb.saturating_mul(1 << 20);
    let (file, len) = open_regular(path)?;
    let too_big = || {
        refused(
            path,
            format!(
                "is larger than the {max_mb} MiB limit for a text input; check it is the right \
                 file, or raise the limit with {MAX_TEXT_ENV}=<MiB>"
            ),
        )
    };
    if len > cap {
        return Err(too_big());
    }
    let mut bytes = Vec::with_capacity(len as usize);
    file.take(cap + 1)
        .read_to_end(&mut bytes)
        .map_err(IoError::at(path))?;
    if bytes.len() as u64 > cap {
        return Err(too_big());
    }
    let text = String::from_utf8(bytes).map_err(|e| {
        refused(
            path,
            format!(
                "is not UTF-8 text (byte {} is not valid); save it as UTF-8 text",
                e.utf8_error().valid_up_to() + 1
            ),
        )
    })?;
    Ok(strip_bom(&text).to_string())
}

/// `text` without a leading UTF-8 byte-order mark.
pub fn strip_bom(text: &str) -> &str {
    text.strip_prefix('\u{feff}').unwrap_or(text)
}

/// The lines of a regular file, each capped in length: a line longer than the cap is an error
/// naming its 1-based line number, so a file with no line ends is not read into memory whole. A
/// byte-order mark before the first line is dropped.
pub fn capped_lines(path: &Path) -> Result<CappedLines, IoError> {
    let (file, _) = open_regular(path)?;
    let max_kb = limit(MAX_LINE_ENV, DEFAULT_MAX_LINE_KB);
    Ok(CappedLines {
        reader: io::BufReader::new(file),
        max_kb,
        line: 0,
    })
}

/// Iterator of [`capped_lines`].
pub struct CappedLines {
    reader: io::BufReader<File>,
    max_kb: u64,
    line: usize,
}

impl Iterator for CappedLines {
    type Item = io::Result<String>;

    fn next(&mut self) -> Option<io::Result<String>> {
        let cap = self.max_kb.saturating_mul(1024);
        let mut buf = Vec::new();
        let read = (&mut self.reader).take(cap + 1).read_until(b'\n', &mut buf);
        match read {
            Err(e) => return Some(Err(e)),
            Ok(0) => return None,
            Ok(_) => {}
        }
        self.line += 1;
        if buf.len() as u64 > cap && !buf.ends_with(b"\n") {
            return Some(Err(io::Error::new(
                io::ErrorKind::InvalidData,
                format!(
                    "line {} is longer than the {} KiB limit; check it is the right file, or raise \
                     the limit with {MAX_LINE_ENV}=<KiB>",
                    self.line, self.max_kb
                ),
            )));
        }
        while buf.last().is_some_and(|&b| b == b'\n' || b == b'\r') {
            buf.pop();
        }
        let text = match String::from_utf8(buf) {
            Ok(t) => t,
            Err(_) => {
                return Some(Err(io::Error::new(
                    io::ErrorKind::InvalidData,
                    format!("line {} is not UTF-8 text", self.line),
                )))
            }
        };
        if self.line == 1 {
            return Some(Ok(strip_bom(&text).to_string()));
        }
        Some(Ok(text))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_bom_is_dropped_and_lines_are_numbered_from_one() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("t.csv");
        std::fs::write(&p, "\u{feff}frame,t_s\r\n0,0.5\n").unwrap();
        assert_eq!(read_text(&p).unwrap(), "frame,t_s\r\n0,0.5\n");
        let lines: Vec<String> = capped_lines(&p).unwrap().map(Result::unwrap).collect();
        assert_eq!(lines, ["frame,t_s", "0,0.5"]);
    }

    #[test]
    fn a_line_over_the_cap_is_refused_with_its_number() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("long.csv");
        let long = "9".repeat((DEFAULT_MAX_LINE_KB as usize) * 1024 + 10);
        std::fs::write(&p, format!("frame\n{long}\n")).unwrap();
        let mut it = capped_lines(&p).unwrap();
        assert_eq!(it.next().unwrap().unwrap(), "frame");
        let e = it.next().unwrap().unwrap_err().to_string();
        assert!(e.contains("line 2") && e.contains(MAX_LINE_ENV), "{e}");
    }

    #[cfg(unix)]
    #[test]
    fn a_device_is_named_not_read() {
        let e = read_text(Path::new("/dev/zero")).unwrap_err().to_string();
        assert!(e.contains("a device") && e.contains("/dev/zero"), "{e}");
    }
}
