//! The track file's reader: the whole file back as rows, with the file and line in every error.
//!
//! Comment lines (`#`) and blank lines are skipped; columns are found by name, so only `frame`, `t_s`,
//! `x_px`, `y_px` and `status` are required; a truncated last line (a run killed while writing) is
//! left out and reported.

use super::error::TrackFileError;
use super::row::{TrackRow, BASE_COLUMNS};
use crate::error::{IoError, LineError};
use crate::spot::{SpotFix, SpotStatus};
use crate::textfile::CappedLines;
use crate::units::{PixelPoint, ScreenPoint, Seconds};
use std::path::Path;

/// A track file as read back.
#[derive(Debug, Clone)]
pub struct TrackFile {
    pub rows: Vec<TrackRow>,
    /// Whether the file has `x_mm,y_mm` columns.
    pub has_mm: bool,
    /// Whether the last line was cut short (the writer was killed mid-line) and skipped.
    pub truncated_tail: bool,
    /// The 1-based line (as an editor shows it) of each row in the file.
    pub lines: Vec<usize>,
}

impl TrackFile {
    /// An error naming the file's line of the first row whose time is not later than the row
    /// before it (the analysis needs rows in time order).
    pub fn check_time_order(&self, path: &Path) -> Result<(), TrackFileError> {
        // Rows added after reading have no line: they are named by their place among the rows.
        let line = |k: usize| self.lines.get(k).copied();
        for (k, w) in self.rows.windows(2).enumerate() {
            if w[1].t.0 <= w[0].t.0 {
                let message = |before: String| {
                    format!(
                        "t_s = {} is not later than {} on {before}; the rows of a track must be in time order",
                        w[1].t.0, w[0].t.0
                    )
                };
                return Err(match (line(k), line(k + 1)) {
                    (Some(a), Some(b)) => line_error(path, b, message(format!("line {a}"))),
                    _ => TrackFileError::Parse(LineError {
                        path: path.to_path_buf(),
                        line: k + 2,
                        message: message(format!("row {}", k + 1)),
                    }),
                });
            }
        }
        Ok(())
    }
}

/// Read a whole track file. Comment lines (`#`) are skipped; a truncated last line (a run killed while
/// writing) is ignored with `truncated_tail = true`.
pub fn read_track(path: &Path) -> Result<TrackFile, TrackFileError> {
    let mut lines = crate::textfile::capped_lines(path)
        .map_err(TrackFileError::Io)?
        .enumerate();
    let (header_no, header) = read_header(path, &mut lines)?;
    let columns = Columns::find(path, header_no, &header)?;
    let body: Vec<(usize, String)> = lines
        .map(|(i, l)| l.map(|l| (i + 1, l)))
        .collect::<Result<_, _>>()
        .map_err(|source| io_error(path, source))?;
    let (rows, lines, truncated_tail) = read_rows(path, &columns, body)?;
    Ok(TrackFile {
        rows,
        lines,
        has_mm: columns.x_mm.is_some() && columns.y_mm.is_some(),
        truncated_tail,
    })
}

fn io_error(path: &Path, source: std::io::Error) -> TrackFileError {
    TrackFileError::Io(IoError {
        path: path.to_path_buf(),
        source,
    })
}

fn line_error(path: &Path, line: usize, message: String) -> TrackFileError {
    TrackFileError::Parse(LineError {
        path: path.to_path_buf(),
        line,
        message,
    })
}

fn skipped(line: &str) -> bool {
    line.trim().is_empty() || line.starts_with('#')
}

/// The first line that is neither blank nor a comment, with its 1-based line number.
fn read_header(
    path: &Path,
    lines: &mut std::iter::Enumerate<CappedLines>,
) -> Result<(usize, String), TrackFileError> {
    for (i, l) in lines {
        let l = l.map_err(|source| io_error(path, source))?;
        if !skipped(&l) {
            return Ok((i + 1, l));
        }
    }
    Err(line_error(
        path,
        1,
        "empty file: expected a header line starting with 'frame,t_s'".into(),
    ))
}

/// Where each column is in the header.
struct Columns {
    /// Number of header cells: a row with fewer is short.
    count: usize,
    frame: usize,
    t: usize,
    x: usize,
    y: usize,
    status: usize,
    peak: Option<usize>,
    integral: Option<usize>,
    width: Option<usize>,
    saturated: Option<usize>,
    snr: Option<usize>,
    x_mm: Option<usize>,
    y_mm: Option<usize>,
}

impl Columns {
    fn find(path: &Path, header_no: usize, header: &str) -> Result<Columns, TrackFileError> {
        // A spreadsheet may save the names quoted; the byte-order mark is dropped by the reader.
        let cols: Vec<&str> = header
            .split(',')
            .map(|c| c.trim().trim_matches('"').trim())
            .collect();
        let find = |name: &str| cols.iter().position(|c| *c == name);
        let need = |name: &str| {
            find(name).ok_or_else(|| {
                line_error(
                    path,
                    header_no,
                    format!(
                        "missing column '{name}'; a track file made by 'spotlever track' has {}",
                        BASE_COLUMNS.join(",")
                    ),
                )
            })
        };
        Ok(Columns {
            count: cols.len(),
            frame: need("frame")?,
            t: need("t_s")?,
            x: need("x_px")?,
            y: need("y_px")?,
            status: need("status")?,
            peak: find("peak"),
            integral: find("integral"),
            width: find("width_px"),
            saturated: find("saturated_px"),
            snr: find("snr"),
            x_mm: find("x_mm"),
            y_mm: find("y_mm"),
        })
    }
}

/// The rows after the header with their line numbers, and whether a short last line was left out.
fn read_rows(
    path: &Path,
    columns: &Columns,
    body: Vec<(usize, String)>,
) -> Result<(Vec<TrackRow>, Vec<usize>, bool), TrackFileError> {
    let mut rows = Vec::new();
    let mut lines = Vec::new();
    let n = body.len();
    for (k, (line_no, line)) in body.into_iter().enumerate() {
        if skipped(&line) {
            continue;
        }
        let cells = Cells {
            path,
            line_no,
            cells: line.split(',').map(str::trim).collect(),
        };
        if cells.cells.len() < columns.count {
            if k + 1 == n {
                return Ok((rows, lines, true));
            }
            return Err(cells.error(format!(
                "{} cells, header has {}",
                cells.cells.len(),
                columns.count
            )));
        }
        rows.push(cells.row(columns)?);
        lines.push(line_no);
    }
    Ok((rows, lines, false))
}

/// One data line's cells, with where they came from for the errors.
struct Cells<'a> {
    path: &'a Path,
    line_no: usize,
    cells: Vec<&'a str>,
}

impl Cells<'_> {
    fn error(&self, message: String) -> TrackFileError {
        line_error(self.path, self.line_no, message)
    }

    /// A number cell: empty is `None`; anything but a finite number is an error.
    fn num(&self, c: usize, name: &str) -> Result<Option<f64>, TrackFileError> {
        let s = self.cells[c];
        if s.is_empty() {
            return Ok(None);
        }
        let v: f64 = s
            .parse()
            .map_err(|_| self.error(format!("column '{name}': {s:?} is not a number")))?;
        if !v.is_finite() {
            return Err(self.error(format!("column '{name}': {s:?} is not a finite number")));
        }
        Ok(Some(v))
    }

    /// A number cell of a column the file may lack.
    fn opt(&self, c: Option<usize>, name: &str) -> Result<Option<f64>, TrackFileError> {
        match c {
            Some(c) => self.num(c, name),
            None => Ok(None),
        }
    }

    fn row(&self, c: &Columns) -> Result<TrackRow, TrackFileError> {
        let frame = self.cells[c.frame].parse::<u64>().map_err(|_| {
            self.error(format!(
                "column 'frame': {:?} is not a whole number",
                self.cells[c.frame]
            ))
        })?;
        let t = self
            .num(c.t, "t_s")?
            .ok_or_else(|| self.error("column 't_s' is empty".into()))?;
        let status = SpotStatus::parse(self.cells[c.status]).ok_or_else(|| {
            self.error(format!(
                "column 'status': {:?} is not one of ok, saturated, lost, ambiguous, unreadable",
                self.cells[c.status]
            ))
        })?;
        let position = match (self.num(c.x, "x_px")?, self.num(c.y, "y_px")?) {
            (Some(x), Some(y)) => Some(PixelPoint { x, y }),
            _ => None,
        };
        let screen = match (self.opt(c.x_mm, "x_mm")?, self.opt(c.y_mm, "y_mm")?) {
            (Some(x_mm), Some(y_mm)) => Some(ScreenPoint { x_mm, y_mm }),
            _ => None,
        };
        Ok(TrackRow {
            frame,
            t: Seconds(t),
            fix: SpotFix {
                position,
                peak: self.opt(c.peak, "peak")?.unwrap_or(0.0),
                integral: self.opt(c.integral, "integral")?.unwrap_or(0.0),
                width_px: self.opt(c.width, "width_px")?.unwrap_or(0.0),
                saturated_px: self.opt(c.saturated, "saturated_px")?.unwrap_or(0.0) as u32,
                snr: self.opt(c.snr, "snr")?.unwrap_or(0.0),
                status,
            },
            screen,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::track::TrackWriter;

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
