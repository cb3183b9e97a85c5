//! The track file's writer: the header, then one row per frame, written and flushed row by row so a
//! killed run keeps what it wrote.
//!
//! Columns: `frame,t_s,x_px,y_px,peak,integral,width_px,saturated_px,snr,status`, then `x_mm,y_mm` when a
//! calibration was used. A frame without a position has empty position cells.

use super::error::TrackFileError;
use super::row::{TrackRow, BASE_COLUMNS};
use crate::error::IoError;
use crate::outfile::Kind;
use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

/// What the track file is, for the check of a file it would replace: text naming the `frame` column.
pub const TRACK_KIND: Kind = Kind::Text {
    what: "a track file",
    mark: "frame",
};

/// Writes rows as they come; each row is flushed to the OS at most `flush_every` after it was written
/// (default: immediately).
pub struct TrackWriter {
    out: BufWriter<File>,
    path: PathBuf,
    with_mm: bool,
    last_flush: Instant,
    flush_every: Duration,
}

impl TrackWriter {
    /// Create (truncate) `path` and write the header.
    pub fn create(path: &Path, with_mm: bool) -> Result<Self, TrackFileError> {
        let file = File::create(path).map_err(|source| TrackFileError::Create {
            path: path.to_path_buf(),
            source,
        })?;
        let mut w = Self::from_file(file, path, with_mm);
        let mut header = BASE_COLUMNS.join(",");
        if with_mm {
            header.push_str(",x_mm,y_mm");
        }
        writeln!(w.out, "{header}").map_err(|e| w.io(e))?;
        w.out.flush().map_err(|e| w.io(e))?;
        Ok(w)
    }

    /// Open an existing track file for appending (its header is kept).
    pub fn append(path: &Path, with_mm: bool) -> Result<Self, TrackFileError> {
        let file = std::fs::OpenOptions::new()
            .append(true)
            .open(path)
            .map_err(|source| TrackFileError::Create {
                path: path.to_path_buf(),
                source,
            })?;
        Ok(Self::from_file(file, path, with_mm))
    }

    fn from_file(file: File, path: &Path, with_mm: bool) -> Self {
        Self {
            out: BufWriter::new(file),
            path: path.to_path_buf(),
            with_mm,
            last_flush: Instant::now(),
            flush_every: Duration::ZERO,
        }
    }

    /// Flush at most this often (rows are still written in order); zero flushes every row.
    pub fn set_flush_interval(&mut self, every: Duration) {
        self.flush_every = every;
    }

    fn io(&self, source: std::io::Error) -> TrackFileError {
        TrackFileError::Io(IoError {
            path: self.path.clone(),
            source,
        })
    }

    pub fn write(&mut self, row: &TrackRow) -> Result<(), TrackFileError> {
        let line = format_row(row, self.with_mm);
        writeln!(self.out, "{line}").map_err(|e| self.io(e))?;
        if self.last_flush.elapsed() >= self.flush_every {
            self.flush()?;
        }
        Ok(())
    }

    /// Write a comment line (`# ...`), e.g. to mark a gap where the camera stopped delivering.
    pub fn comment(&mut self, text: &str) -> Result<(), TrackFileError> {
        writeln!(self.out, "# {text}").map_err(|e| self.io(e))?;
        self.flush()
    }

    pub fn flush(&mut self) -> Result<(), TrackFileError> {
        self.out.flush().map_err(|e| self.io(e))?;
        self.last_flush = Instant::now();
        Ok(())
    }
}

impl Drop for TrackWriter {
    fn drop(&mut self) {
        let _ = self.out.flush();
    }
}

fn fmt_opt(v: Option<f64>, digits: usize) -> String {
    match v {
        Some(v) if v.is_finite() => format!("{v:.digits$}"),
        _ => String::new(),
    }
}

fn format_row(row: &TrackRow, with_mm: bool) -> String {
    let f = &row.fix;
    let mut s = format!(
        "{},{:.6},{},{},{:.2},{:.1},{:.3},{},{:.2},{}",
        row.frame,
        row.t.0,
        fmt_opt(f.position.map(|p| p.x), 4),
        fmt_opt(f.position.map(|p| p.y), 4),
        f.peak,
        f.integral,
        f.width_px,
        f.saturated_px,
        f.snr,
        f.status.as_str()
    );
    if with_mm {
        s.push_str(&format!(
            ",{},{}",
            fmt_opt(row.screen.map(|p| p.x_mm), 5),
            fmt_opt(row.screen.map(|p| p.y_mm), 5)
        ));
    }
    s
}
