//! How a session ended and what it did, as printed when it closes.

use std::fmt;
use std::path::PathBuf;

/// Why a session ended.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum StoppedBy {
    QuitKey,
    Signal(&'static str),
    EndOfSource,
    Duration,
}

impl fmt::Display for StoppedBy {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            StoppedBy::QuitKey => write!(f, "quit command"),
            StoppedBy::Signal(s) => write!(f, "{s}"),
            StoppedBy::EndOfSource => write!(f, "end of source"),
            StoppedBy::Duration => write!(f, "duration reached"),
        }
    }
}

/// What a closed session did.
#[derive(Debug, Clone, PartialEq)]
pub struct Summary {
    pub out: PathBuf,
    pub appended: bool,
    pub rows: u64,
    pub found: u64,
    pub unreadable: u64,
    pub dropped: u64,
    pub gaps: u64,
    pub events: u64,
    pub kept: u64,
    pub first_t: Option<f64>,
    pub last_t: Option<f64>,
    pub elapsed_s: f64,
    pub stopped_by: StoppedBy,
}

impl fmt::Display for Summary {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let pct = if self.rows > 0 {
            100.0 * self.found as f64 / self.rows as f64
        } else {
            0.0
        };
        writeln!(
            f,
            "run {} {} ({})",
            self.out.display(),
            if self.appended {
                "continued"
            } else {
                "recorded"
            },
            self.stopped_by
        )?;
        writeln!(
            f,
            "  frames      {} in {:.1} s wall time; run times {} .. {} s",
            self.rows,
            self.elapsed_s,
            self.first_t.map_or("-".into(), |t| format!("{t:.3}")),
            self.last_t.map_or("-".into(), |t| format!("{t:.3}"))
        )?;
        writeln!(f, "  spot found  {} ({pct:.1}%)", self.found)?;
        writeln!(
            f,
            "  faults      {} unreadable, {} dropped, {} gaps",
            self.unreadable, self.dropped, self.gaps
        )?;
        writeln!(f, "  events      {} marked in events.csv", self.events)?;
        write!(f, "  kept        {} frames in frames/", self.kept)
    }
}
