//! The events file: one `t_s,label` row per mass move (the time the masses were moved and the position
//! they were moved to), read and then laid against the track.
//!
//! Reading the rows against the track ([`lay_out`]):
//! - a row at or before the first sample only names the position the run starts in (the layout files
//!   used to have, `0,A` then one row per later segment, read the same way);
//! - every later row is a move; the samples before the first move are a segment of their own;
//! - a label is a position when it is `A` or `B`, or ends in the word `A` or `B` (`to B`, `masses to A`);
//!   `move` (what `spotlever record` writes for a key press), `swap` or an empty label mean "to the
//!   other position"; any other label is warned about and read as "to the other position";
//! - a row at or after the last sample is warned about and left out.
//!
//! Every message names the file and the 1-based line of the row.

use super::AnalysisError;
use crate::error::{IoError, LineError};
use std::path::Path;

/// A row of an events file: the masses were moved at `t` (s) to the position `label`.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Event {
    pub t: f64,
    pub label: String,
    /// 1-based line of the row in its file (0 when the event was not read from a file).
    #[serde(default)]
    pub line: usize,
}

impl Event {
    /// An event not read from a file.
    pub fn new(t: f64, label: &str) -> Self {
        Self {
            t,
            label: label.to_string(),
            line: 0,
        }
    }
}

/// Problems reading an events file.
#[derive(Debug, thiserror::Error)]
pub enum EventsError {
    #[error(transparent)]
    Io(#[from] IoError),
    #[error(transparent)]
    Parse(#[from] LineError),
}

/// Read `t_s,label` rows (a header line `t_s,label` first; `#` lines and blank lines skipped). Times
/// must increase.
pub fn read_events(path: &Path) -> Result<Vec<Event>, EventsError> {
    let text = crate::textfile::read_text(path).map_err(EventsError::Io)?;
    parse_events(&text, path)
}

/// Parse events text; `path` is only used in messages.
pub fn parse_events(text: &str, path: &Path) -> Result<Vec<Event>, EventsError> {
    let err = |line: usize, message: String| {
        EventsError::Parse(LineError {
            path: path.to_path_buf(),
            line,
            message,
        })
    };
    let mut out: Vec<Event> = Vec::new();
    let mut header_seen = false;
    for (i, raw) in text.lines().enumerate() {
        let line_no = i + 1;
        let l = raw.trim();
        if l.is_empty() || l.starts_with('#') {
            continue;
        }
        let cells: Vec<&str> = l.splitn(2, ',').map(str::trim).collect();
        if !header_seen {
            if cells.first() != Some(&"t_s") {
                return Err(err(
                    line_no,
                    format!("expected the header 't_s,label', found {l:?}"),
                ));
            }
            header_seen = true;
            continue;
        }
        let t: f64 = cells[0]
            .parse()
            .ok()
            .filter(|v: &f64| v.is_finite())
            .ok_or_else(|| {
                err(
                    line_no,
                    format!(
                        "column 't_s': {:?} is not a finite number of seconds",
                        cells[0]
                    ),
                )
            })?;
        if let Some(prev) = out.last() {
            if t <= prev.t {
                return Err(err(
                    line_no,
                    format!(
                        "time {t} s is not after the previous event ({} s, line {}); list events in time order",
                        prev.t, prev.line
                    ),
                ));
            }
        }
        out.push(Event {
            t,
            label: cells.get(1).copied().unwrap_or("").to_string(),
            line: line_no,
        });
    }
    if !header_seen {
        return Err(err(
            1,
            "empty file: expected a header line 't_s,label'".into(),
        ));
    }
    Ok(out)
}

/// What a label says about the position the masses were moved to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LabelMeaning {
    /// Position A or B.
    Position(char),
    /// "The other position" (`move`, `swap`, empty).
    Other,
    /// Not understood.
    Unknown,
}

/// Read a label: `A`/`B` (any case) or a label whose last word is `A` or `B`; `move`, `swap` or empty.
pub fn label_meaning(label: &str) -> LabelMeaning {
    let l = label.trim();
    let last = l.split_whitespace().last().unwrap_or("");
    match last.to_ascii_uppercase().as_str() {
        "A" => LabelMeaning::Position('A'),
        "B" => LabelMeaning::Position('B'),
        _ if l.is_empty() || l.eq_ignore_ascii_case("move") || l.eq_ignore_ascii_case("swap") => {
            LabelMeaning::Other
        }
        _ => LabelMeaning::Unknown,
    }
}

fn other(p: char) -> char {
    if p == 'A' {
        'B'
    } else {
        'A'
    }
}

/// A logged move laid against the track.
#[derive(Debug, Clone, PartialEq)]
pub struct LoggedMove {
    /// Logged time, s.
    pub t: f64,
    /// Position after the move, `A` or `B`.
    pub to: char,
    /// 1-based line in the events file (0 when not from a file).
    pub line: usize,
}

/// The events laid against the track: the starting position and the moves inside the track.
#[derive(Debug, Clone, PartialEq)]
pub struct Layout {
    /// Position of the first segment, `A` or `B`.
    pub start: char,
    pub moves: Vec<LoggedMove>,
}

impl Layout {
    /// Labels of the segments, in order (the starting position, then each move's).
    pub fn labels(&self) -> Vec<String> {
        std::iter::once(self.start)
            .chain(self.moves.iter().map(|m| m.to))
            .map(String::from)
            .collect()
    }
}

/// Where a row is, for messages: `FILE line N` (or `event at T s` for events not from a file).
pub fn row_name(file: &str, e: &Event) -> String {
    if e.line > 0 {
        format!("{file}, line {}", e.line)
    } else {
        format!("event at {} s", e.t)
    }
}

/// The position a move in row `e` goes to, the masses being at `at` before it.
fn resolve(e: &Event, at: char, file: &str, warnings: &mut Vec<String>) -> char {
    match label_meaning(&e.label) {
        LabelMeaning::Position(p) => {
            if p == at {
                warnings.push(format!(
                    "{}: a move to {p}, where the masses already were: check the label (the segments are still split here)",
                    row_name(file, e)
                ));
            }
            p
        }
        LabelMeaning::Other => other(at),
        LabelMeaning::Unknown => {
            warnings.push(format!(
                "{}: label {:?} is neither A nor B (nor 'move'): read as a move to the other position, {}",
                row_name(file, e),
                e.label,
                other(at)
            ));
            other(at)
        }
    }
}

/// Lay `events` against a track running from `t_first` to `t_last` (s); remarks go to `warnings`,
/// naming `file` and the row's line.
pub fn lay_out(
    events: &[Event],
    t_first: f64,
    t_last: f64,
    file: &str,
    warnings: &mut Vec<String>,
) -> Result<Layout, AnalysisError> {
    let (before, rest): (Vec<&Event>, Vec<&Event>) = events.iter().partition(|e| e.t <= t_first);
    for e in before.iter().rev().skip(1) {
        warnings.push(format!(
            "{}: the row at {} s lies before the track starts ({t_first} s) and a later row names the starting position: left out",
            row_name(file, e),
            e.t
        ));
    }
    let mut moves: Vec<LoggedMove> = Vec::new();
    let named_start = before.last().and_then(|e| match label_meaning(&e.label) {
        LabelMeaning::Position(p) => Some(p),
        _ => None,
    });
    let first_to = rest.first().and_then(|e| match label_meaning(&e.label) {
        LabelMeaning::Position(p) => Some(p),
        _ => None,
    });
    let start = named_start.or(first_to.map(other)).unwrap_or('A');
    if let Some(e) = before.last() {
        if named_start.is_none() {
            warnings.push(format!(
                "{}: label {:?} does not name a starting position (A or B): the run is taken to start at {start}",
                row_name(file, e),
                e.label
            ));
        }
    }
    let mut at = start;
    for e in rest {
        if e.t >= t_last {
            warnings.push(format!(
                "{}: the move at {} s is after the last sample ({t_last} s): left out",
                row_name(file, e),
                e.t
            ));
            continue;
        }
        let to = resolve(e, at, file, warnings);
        moves.push(LoggedMove {
            t: e.t,
            to,
            line: e.line,
        });
        at = to;
    }
    if moves.is_empty() {
        return Err(AnalysisError::NoMovesInTrack {
            file: file.to_string(),
            t_first,
            t_last,
        });
    }
    Ok(Layout { start, moves })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn events_file_errors_name_the_line() {
        let p = Path::new("ev.csv");
        let ok = parse_events("t_s,label\n# comment\n0,A\n1200.5,B\n", p).unwrap();
        assert_eq!(ok.len(), 2);
        assert_eq!(ok[1].label, "B");
        assert_eq!(ok[1].line, 4);
        let e = parse_events("t_s,label\n0,A\nsoon,B\n", p)
            .unwrap_err()
            .to_string();
        assert!(e.contains("line 3") && e.contains("soon"), "{e}");
        let e = parse_events("t_s,label\n10,A\n5,B\n", p)
            .unwrap_err()
            .to_string();
        assert!(e.contains("line 3") && e.contains("time order"), "{e}");
        let e = parse_events("time,label\n", p).unwrap_err().to_string();
        assert!(e.contains("line 1"), "{e}");
    }

    #[test]
    fn labels_are_read_as_positions_or_the_other_side() {
        assert_eq!(label_meaning("a"), LabelMeaning::Position('A'));
        assert_eq!(label_meaning("masses to B"), LabelMeaning::Position('B'));
        assert_eq!(label_meaning("move"), LabelMeaning::Other);
        assert_eq!(label_meaning(""), LabelMeaning::Other);
        assert_eq!(label_meaning("far side"), LabelMeaning::Unknown);
    }

    #[test]
    fn moves_lay_out_against_the_track() {
        let ev = |rows: &[(f64, &str, usize)]| -> Vec<Event> {
            rows.iter()
                .map(|&(t, l, line)| Event {
                    t,
                    label: l.into(),
                    line,
                })
                .collect()
        };
        let mut w = Vec::new();
        // One logged move: two segments, the first one before the move.
        let l = lay_out(&ev(&[(1140.0, "move", 2)]), 0.0, 3000.0, "e.csv", &mut w).unwrap();
        assert_eq!(l.labels(), vec!["A", "B"]);
        assert!(w.is_empty(), "{w:?}");
        // The layout with a first row at the track's start reads as before.
        let rows = ev(&[(0.0, "B", 2), (1000.0, "A", 3), (2000.0, "B", 4)]);
        let l = lay_out(&rows, 0.0, 3000.0, "e.csv", &mut w).unwrap();
        assert_eq!(l.labels(), vec!["B", "A", "B"]);
        assert_eq!(l.moves[0].t, 1000.0);
        // A first move to A means the run started at B.
        let l = lay_out(&ev(&[(500.0, "to A", 2)]), 0.0, 3000.0, "e.csv", &mut w).unwrap();
        assert_eq!(l.start, 'B');
        // Rows after the track and unknown labels are warned about with their line.
        let rows = ev(&[(500.0, "far", 2), (900.0, "move", 3), (4000.0, "B", 7)]);
        let l = lay_out(&rows, 0.0, 3000.0, "e.csv", &mut w).unwrap();
        assert_eq!(l.labels(), vec!["A", "B", "A"]);
        assert!(w
            .iter()
            .any(|m| m.contains("e.csv, line 2") && m.contains("far")));
        assert!(w
            .iter()
            .any(|m| m.contains("e.csv, line 7") && m.contains("after the last")));
        // No move inside the track is an error naming the file.
        let e = lay_out(&ev(&[(0.0, "A", 2)]), 0.0, 3000.0, "e.csv", &mut w).unwrap_err();
        assert!(e.to_string().contains("e.csv"), "{e}");
    }
}
