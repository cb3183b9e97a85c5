//! Reading point pairs from CSV: `x_px,y_px,x_mm,y_mm`, one pair a line, an optional header line with
//! those names, `#` comment lines and blank lines allowed. Every error names the file and line.

use super::homography::PointPair;
use super::CalibError;
use crate::units::{PixelPoint, ScreenPoint};
use std::path::Path;

/// Column names, in order.
pub const COLUMNS: [&str; 4] = ["x_px", "y_px", "x_mm", "y_mm"];

/// Read point pairs from a CSV file; each pair is labelled "line N" after its line in the file.
pub fn read_pairs(path: &Path) -> Result<Vec<PointPair>, CalibError> {
    let text = crate::textfile::read_text(path).map_err(|e| CalibError::Read {
        path: e.path,
        source: e.source,
    })?;
    parse_pairs(&text, path)
}

/// Parse the text of a point-pair CSV; `path` is only used in messages.
pub fn parse_pairs(text: &str, path: &Path) -> Result<Vec<PointPair>, CalibError> {
    let err = |line: usize, message: String| CalibError::PointsCsv {
        path: path.to_path_buf(),
        line,
        message,
    };
    let mut out = Vec::new();
    let mut first = true;
    // Lines are handled here (not by a CSV reader) so that comments and blank lines keep the numbering.
    for (k, raw) in text.lines().enumerate() {
        let line = k + 1;
        let body = raw.trim();
        if body.is_empty() || body.starts_with('#') {
            continue;
        }
        let rec: Vec<&str> = body
            .split(',')
            .map(|f| f.trim().trim_matches('"').trim())
            .collect();
        if first {
            first = false;
            let names: Vec<String> = rec.iter().map(|f| f.to_ascii_lowercase()).collect();
            if names.iter().any(|n| COLUMNS.contains(&n.as_str())) {
                if names != COLUMNS {
                    return Err(err(
                        line,
                        format!(
                            "header is {:?}; expected exactly {}",
                            rec.join(","),
                            COLUMNS.join(",")
                        ),
                    ));
                }
                continue;
            }
        }
        if rec.len() != 4 {
            return Err(err(
                line,
                format!(
                    "{} fields; each line must have four: {}",
                    rec.len(),
                    COLUMNS.join(",")
                ),
            ));
        }
        let mut v = [0.0; 4];
        for (k, field) in rec.iter().enumerate() {
            let x: f64 = field
                .parse()
                .map_err(|_| err(line, format!("{} = {field:?} is not a number", COLUMNS[k])))?;
            if !x.is_finite() {
                return Err(err(
                    line,
                    format!(
                        "{} = {field:?} is not a finite number; give a measured value",
                        COLUMNS[k]
                    ),
                ));
            }
            v[k] = x;
        }
        out.push(PointPair {
            pixel: PixelPoint { x: v[0], y: v[1] },
            screen: ScreenPoint {
                x_mm: v[2],
                y_mm: v[3],
            },
            label: format!("line {line}"),
        });
    }
    Ok(out)
}

/// Write point pairs as CSV text with a header.
pub fn pairs_to_csv(pairs: &[PointPair]) -> String {
    let mut s = COLUMNS.join(",");
    s.push('\n');
    for p in pairs {
        s.push_str(&format!(
            "{},{},{},{}\n",
            p.pixel.x, p.pixel.y, p.screen.x_mm, p.screen.y_mm
        ));
    }
    s
}
