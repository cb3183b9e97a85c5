//! The sidecar times file of an image sequence: CSV with the header `file,t_s`, one row per image,
//! times in seconds strictly increasing from row to row.

use super::SourceError;
use crate::textfile::read_text;
use crate::units::Seconds;
use std::collections::HashMap;
use std::path::Path;

/// One row of a times file.
#[derive(Debug, Clone, PartialEq)]
pub struct TimeEntry {
    pub t: Seconds,
    /// Line in the times file, for messages.
    pub line: usize,
}

/// Read a times file into a map from file name to time. Errors name the line.
pub fn read_times(path: &Path) -> Result<HashMap<String, TimeEntry>, SourceError> {
    let shown = path.display().to_string();
    let text = read_text(path).map_err(|e| SourceError::from_io(path, e.source))?;
    let bad = |line: usize, message: String| SourceError::BadLine {
        path: shown.clone(),
        line,
        message,
    };
    let mut lines = text
        .lines()
        .enumerate()
        .map(|(i, l)| (i + 1, l.trim()))
        .filter(|(_, l)| !l.is_empty() && !l.starts_with('#'));
    let (hline, header) = lines
        .next()
        .ok_or_else(|| bad(1, "empty file: expected the header 'file,t_s'".into()))?;
    let cols: Vec<&str> = header.split(',').map(str::trim).collect();
    let (Some(c_file), Some(c_t)) = (
        cols.iter().position(|c| *c == "file"),
        cols.iter().position(|c| *c == "t_s"),
    ) else {
        return Err(bad(
            hline,
            format!("header {header:?} lacks the columns 'file' and 't_s'; write 'file,t_s'"),
        ));
    };
    let mut map = HashMap::new();
    let mut prev: Option<(f64, usize)> = None;
    for (line, l) in lines {
        let cells: Vec<&str> = l.split(',').map(str::trim).collect();
        if cells.len() < cols.len() {
            return Err(bad(
                line,
                format!(
                    "{} cells, the header has {}: write 'name.png,12.5'",
                    cells.len(),
                    cols.len()
                ),
            ));
        }
        let name = cells[c_file];
        if name.is_empty() {
            return Err(bad(line, "the file name is empty".into()));
        }
        let t: f64 = cells[c_t].parse().map_err(|_| {
            bad(
                line,
                format!("t_s {:?} is not a number of seconds", cells[c_t]),
            )
        })?;
        if !t.is_finite() {
            return Err(bad(
                line,
                format!("t_s {:?} is not a finite number", cells[c_t]),
            ));
        }
        if let Some((pt, pl)) = prev {
            if t <= pt {
                return Err(bad(
                    line,
                    format!("time {t} s is not after {pt} s on line {pl}; times must increase from row to row"),
                ));
            }
        }
        prev = Some((t, line));
        if map
            .insert(
                name.to_string(),
                TimeEntry {
                    t: Seconds(t),
                    line,
                },
            )
            .is_some()
        {
            return Err(bad(line, format!("{name} is listed twice")));
        }
    }
    Ok(map)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn write(text: &str) -> (tempfile::TempDir, std::path::PathBuf) {
        let d = tempfile::tempdir().unwrap();
        let p = d.path().join("times.csv");
        std::fs::write(&p, text).unwrap();
        (d, p)
    }

    #[test]
    fn reads_and_names_bad_lines() {
        let (_d, p) = write("file,t_s\na.png,0\nb.png,0.5\n");
        let m = read_times(&p).unwrap();
        assert_eq!(m["b.png"].t, Seconds(0.5));
        let (_d, p) = write("file,t_s\na.png,0\nb.png,0.5\nc.png,0.4\n");
        let e = read_times(&p).unwrap_err().to_string();
        assert!(e.contains("line 4") && e.contains("increase"), "{e}");
        let (_d, p) = write("file,t_s\na.png,zero\n");
        let e = read_times(&p).unwrap_err().to_string();
        assert!(e.contains("line 2") && e.contains("not a number"), "{e}");
        let (_d, p) = write("name,time\n");
        let e = read_times(&p).unwrap_err().to_string();
        assert!(e.contains("line 1"), "{e}");
    }
}
