//! The analysis' files in one folder: `angle.csv`, `segments.csv`, `result.json` and `report.svg`.

use super::result_json::WriteError;
use super::{angle_csv, report_svg, result_json, segments_csv};
use crate::analysis::{Analysis, Sample};
use crate::outfile::Kind;
use std::path::{Path, PathBuf};

/// Why the analysis' files could not all be written.
#[derive(Debug, thiserror::Error)]
pub enum ResultsError {
    #[error("{path}: cannot create the output folder")]
    CreateFolder {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
    #[error(transparent)]
    Write(#[from] WriteError),
}

/// The files [`write_results`] writes into its folder, with what each holds.
pub const RESULT_FILES: &[(&str, Kind)] = &[
    (
        "angle.csv",
        Kind::Text {
            what: "an angle table",
            mark: "t_s,theta_rad",
        },
    ),
    (
        "segments.csv",
        Kind::Text {
            what: "a segment table",
            mark: "segment,label",
        },
    ),
    (
        "result.json",
        Kind::Text {
            what: "a JSON result",
            mark: "{",
        },
    ),
    (
        "report.svg",
        Kind::Text {
            what: "an SVG report",
            mark: "<svg",
        },
    ),
];

/// Write the analysis files (angle.csv, segments.csv, result.json, report.svg) of `samples` analysed
/// as `analysis` into `dir` (created if needed).
pub fn write_results(
    dir: &Path,
    samples: &[Sample],
    analysis: &Analysis,
) -> Result<(), ResultsError> {
    std::fs::create_dir_all(dir).map_err(|source| ResultsError::CreateFolder {
        path: dir.to_path_buf(),
        source,
    })?;
    let p = |name: &str| dir.join(name);
    angle_csv::write_angle_csv(&p("angle.csv"), samples, analysis)?;
    segments_csv::write_segments_csv(&p("segments.csv"), analysis)?;
    result_json::write_result_json(&p("result.json"), analysis)?;
    report_svg::write_report_svg(&p("report.svg"), samples, analysis)?;
    Ok(())
}
