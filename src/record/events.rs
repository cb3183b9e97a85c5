//! The events file: one `t_s,label` row per marked moment (a mass move), appended and flushed as soon
//! as it is marked, so the analyzer can split the track into segments.

use super::RecordError;
use crate::units::Seconds;
use std::fs::{File, OpenOptions};
use std::io::Write;
use std::path::{Path, PathBuf};

/// Header line of the events file.
pub const EVENTS_HEADER: &str = "t_s,label";

/// Appends marked events.
pub struct EventLog {
    file: File,
    path: PathBuf,
    count: u64,
}

impl EventLog {
    /// Open `path` for appending, writing the header if the file is new or empty.
    pub fn open(path: &Path) -> Result<Self, RecordError> {
        let mut file = OpenOptions::new()
            .create(true)
            .append(true)
            .open(path)
            .map_err(RecordError::io(path))?;
        let len = file.metadata().map_err(RecordError::io(path))?.len();
        if len == 0 {
            writeln!(file, "{EVENTS_HEADER}").map_err(RecordError::io(path))?;
        }
        Ok(Self {
            file,
            path: path.to_path_buf(),
            count: 0,
        })
    }

    /// Append one event and hand it to the OS at once.
    pub fn mark(&mut self, t: Seconds, label: &str) -> Result<(), RecordError> {
        let label = clean_label(label);
        // One write call per row, so a kill cannot split it from the OS's point of view.
        let row = format!("{:.6},{label}\n", t.0);
        self.file
            .write_all(row.as_bytes())
            .map_err(RecordError::io(&self.path))?;
        self.count += 1;
        Ok(())
    }

    /// Events marked through this log.
    pub fn count(&self) -> u64 {
        self.count
    }
}

/// A label safe for one CSV cell: no commas, quotes or line breaks, never empty.
pub fn clean_label(label: &str) -> String {
    let s: String = label
        .trim()
        .chars()
        .map(|c| match c {
            ',' | ';' | '"' => ' ',
            c if c.is_control() => ' ',
            c => c,
        })
        .collect();
    let s = s.split_whitespace().collect::<Vec<_>>().join(" ");
    if s.is_empty() {
        "move".to_string()
    } else {
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn writes_header_once_and_rows_in_order() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("events.csv");
        {
            let mut log = EventLog::open(&p).unwrap();
            log.mark(Seconds(12.5), "move").unwrap();
            assert_eq!(log.count(), 1);
        }
        {
            let mut log = EventLog::open(&p).unwrap();
            log.mark(Seconds(70.25), "masses, to B\n").unwrap();
        }
        assert_eq!(
            std::fs::read_to_string(&p).unwrap(),
            "t_s,label\n12.500000,move\n70.250000,masses to B\n"
        );
    }

    #[test]
    fn labels_are_cleaned() {
        assert_eq!(clean_label("  "), "move");
        assert_eq!(clean_label("a\"b\tc"), "a b c");
    }
}
