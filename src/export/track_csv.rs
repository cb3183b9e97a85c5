//! The track file: one row per frame with the spot's position and quality, written and flushed row by
//! row, and read back (with line numbers in every error) by the analyzer.
//!
//! Columns: `frame,t_s,x_px,y_px,peak,integral,width_px,saturated_px,snr,status`, then `x_mm,y_mm` when a
//! calibration was used. A frame without a position has empty position cells.

use crate::error::{IoError, LineError};
use crate::spot::{SpotFix, SpotStatus};
use crate::units::{PixelPoint, ScreenPoint, Seconds};
use std::fs::File;
use std::io::{BufRead, BufReader, BufWriter, Write};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};
use thiserror::Error;

const BASE_COLUMNS: [&str; 10] = [
    "frame",
    "t_s",
    "x_px",
    "y_px",
    "peak",
    "integral",
    "width_px",
    "saturated_px",
    "snr",
    "status",
];

/// One frame's row.
#[derive(Debug, Clone, PartialEq)]
pub struct TrackRow {
    pub frame: u64,
    pub t: Seconds,
    pub fix: SpotFix,
    /// Screen position, when a calibration was given and the spot was found.
    pub screen: Option<ScreenPoint>,
}

/// Problems reading or writing a track file.
#[derive(Debug, Error)]
pub enum TrackFileError {
    #[error("{path}: {source}; check that the folder exists and is writable")]
    Create {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
    #[error(transparent)]
    Io(#[from] IoError),
    #[error(transparent)]
    Parse(#[from] LineError),
}

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

/// Read a whole track file. Comment lines (`#`) are skipped; a truncated last line (a run killed while
/// writing) is ignored with `truncated_tail = true`.
pub fn read_track(path: &Path) -> Result<TrackFile, TrackFileError> {
    let file = File::open(path).map_err(|source| {
        TrackFileError::Io(IoError {
            path: path.to_path_buf(),
            source,
        })
    })?;
    let reader = BufReader::new(file);
    let perr = |line: usize, message: String| {
        TrackFileError::Parse(LineError {
            path: path.to_path_buf(),
            line,
            message,
        })
    };
    let mut lines = reader.lines().enumerate();
    let header = loop {
        match lines.next() {
            None => {
                return Err(perr(
                    1,
                    "empty file: expected a header line starting with 'frame,t_s'".into(),
                ))
            }
            Some((i, l)) => {
                let l = l.map_err(|source| {
                    TrackFileError::Io(IoError {
                        path: path.to_path_buf(),
                        source,
                    })
                })?;
                if l.trim().is_empty() || l.starts_with('#') {
                    continue;
                }
                break (i + 1, l);
            }
        }
    };
    let cols: Vec<&str> = header.1.split(',').map(str::trim).collect();
    let find = |name: &str| cols.iter().position(|c| *c == name);
    let need = |name: &str| {
        find(name).ok_or_else(|| {
            perr(
                header.0,
                format!(
                    "missing column '{name}'; a track file made by 'spotlever track' has {}",
                    BASE_COLUMNS.join(",")
                ),
            )
        })
    };
    let c_frame = need("frame")?;
    let c_t = need("t_s")?;
    let c_x = need("x_px")?;
    let c_y = need("y_px")?;
    let c_status = need("status")?;
    let c_peak = find("peak");
    let c_int = find("integral");
    let c_w = find("width_px");
    let c_sat = find("saturated_px");
    let c_snr = find("snr");
    let c_xmm = find("x_mm");
    let c_ymm = find("y_mm");

    let mut rows = Vec::new();
    let mut truncated_tail = false;
    let all: Vec<(usize, String)> = lines
        .map(|(i, l)| l.map(|l| (i + 1, l)))
        .collect::<Result<_, _>>()
        .map_err(|source| {
            TrackFileError::Io(IoError {
                path: path.to_path_buf(),
                source,
            })
        })?;
    let n = all.len();
    for (k, (line_no, line)) in all.into_iter().enumerate() {
        if line.trim().is_empty() || line.starts_with('#') {
            continue;
        }
        let cells: Vec<&str> = line.split(',').map(str::trim).collect();
        if cells.len() < cols.len() {
            if k + 1 == n {
                truncated_tail = true;
                break;
            }
            return Err(perr(
                line_no,
                format!("{} cells, header has {}", cells.len(), cols.len()),
            ));
        }
        let num = |c: usize, name: &str| -> Result<Option<f64>, TrackFileError> {
            let s = cells[c];
            if s.is_empty() {
                return Ok(None);
            }
            let v: f64 = s
                .parse()
                .map_err(|_| perr(line_no, format!("column '{name}': {s:?} is not a number")))?;
            if !v.is_finite() {
                return Err(perr(
                    line_no,
                    format!("column '{name}': {s:?} is not a finite number"),
                ));
            }
            Ok(Some(v))
        };
        let opt = |c: Option<usize>, name: &str| -> Result<Option<f64>, TrackFileError> {
            match c {
                Some(c) => num(c, name),
                None => Ok(None),
            }
        };
        let frame = cells[c_frame].parse::<u64>().map_err(|_| {
            perr(
                line_no,
                format!("column 'frame': {:?} is not a whole number", cells[c_frame]),
            )
        })?;
        let t = num(c_t, "t_s")?.ok_or_else(|| perr(line_no, "column 't_s' is empty".into()))?;
        let status = SpotStatus::parse(cells[c_status]).ok_or_else(|| {
            perr(
                line_no,
                format!(
                    "column 'status': {:?} is not one of ok, saturated, lost, ambiguous, unreadable",
                    cells[c_status]
                ),
            )
        })?;
        let position = match (num(c_x, "x_px")?, num(c_y, "y_px")?) {
            (Some(x), Some(y)) => Some(PixelPoint { x, y }),
            _ => None,
        };
        let screen = match (opt(c_xmm, "x_mm")?, opt(c_ymm, "y_mm")?) {
            (Some(x_mm), Some(y_mm)) => Some(ScreenPoint { x_mm, y_mm }),
            _ => None,
        };
        rows.push(TrackRow {
            frame,
            t: Seconds(t),
            fix: SpotFix {
                position,
                peak: opt(c_peak, "peak")?.unwrap_or(0.0),
                integral: opt(c_int, "integral")?.unwrap_or(0.0),
                width_px: opt(c_w, "width_px")?.unwrap_or(0.0),
                saturated_px: opt(c_sat, "saturated_px")?.unwrap_or(0.0) as u32,
                snr: opt(c_snr, "snr")?.unwrap_or(0.0),
                status,
            },
            screen,
        });
    }
    Ok(TrackFile {
        rows,
        has_mm: c_xmm.is_some() && c_ymm.is_some(),
        truncated_tail,
    })
}

/// A track file as read back.
#[derive(Debug, Clone)]
pub struct TrackFile {
    pub rows: Vec<TrackRow>,
    /// Whether the file has `x_mm,y_mm` columns.
    pub has_mm: bool,
    /// Whether the last line was cut short (the writer was killed mid-line) and skipped.
    pub truncated_tail: bool,
}

#[cfg(test)]
mod tests {
    use super::*;

    fn row(frame: u64, found: bool) -> TrackRow {
        TrackRow {
            frame,
            t: Seconds(frame as f64 * 0.5),
            fix: SpotFix {
                position: found.then_some(PixelPoint { x: 10.25, y: 20.5 }),
                peak: 100.0,
                integral: 2000.0,
                width_px: 2.5,
                saturated_px: 0,
                snr: 30.0,
                status: if found {
                    SpotStatus::Ok
                } else {
                    SpotStatus::Lost
                },
            },
            screen: found.then_some(ScreenPoint {
                x_mm: 1.5,
                y_mm: -2.0,
            }),
        }
    }

    #[test]
    fn round_trip_with_and_without_position() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("t.csv");
        {
            let mut w = TrackWriter::create(&p, true).unwrap();
            w.write(&row(0, true)).unwrap();
            w.comment("gap").unwrap();
            w.write(&row(1, false)).unwrap();
        }
        let f = read_track(&p).unwrap();
        assert_eq!(f.rows.len(), 2);
        assert_eq!(f.rows[0], row(0, true));
        assert_eq!(f.rows[1].fix.position, None);
        assert_eq!(f.rows[1].fix.status, SpotStatus::Lost);
        assert!(f.has_mm && !f.truncated_tail);
    }

    #[test]
    fn truncated_tail_is_skipped_and_bad_cells_named() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("t.csv");
        std::fs::write(&p, "frame,t_s,x_px,y_px,peak,integral,width_px,saturated_px,snr,status\n0,0.0,1,2,3,4,5,0,6,ok\n1,0.5,1").unwrap();
        let f = read_track(&p).unwrap();
        assert_eq!(f.rows.len(), 1);
        assert!(f.truncated_tail);
        std::fs::write(&p, "frame,t_s,x_px,y_px,peak,integral,width_px,saturated_px,snr,status\n0,zero,1,2,3,4,5,0,6,ok\n1,0.5,1,2,3,4,5,0,6,ok\n").unwrap();
        let e = read_track(&p).unwrap_err().to_string();
        assert!(e.contains("line 2") && e.contains("t_s"), "{e}");
    }
}
