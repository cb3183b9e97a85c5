//! `angle.csv`: the twist-angle series the analysis used, one row per sample (`t_s,theta_rad,segment`),
//! the segment being 1-based (0 for samples outside every segment). Written and flushed as it
//! goes.

use crate::analysis::{Analysis, Sample};
use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::Path;

use super::result_json::WriteError;

/// Write `samples` with the segment each one was fitted in.
pub fn write_angle_csv(
    path: &Path,
    samples: &[Sample],
    analysis: &Analysis,
) -> Result<(), WriteError> {
    let err = |source| WriteError::new(path, source);
    let mut out = BufWriter::new(File::create(path).map_err(err)?);
    writeln!(out, "t_s,theta_rad,segment").map_err(err)?;
    let last = analysis.segments.last().map_or(0, |g| g.index);
    for s in samples {
        if !(s.t.is_finite() && s.theta.is_finite()) {
            continue;
        }
        let seg = analysis
            .segments
            .iter()
            .find(|g| s.t >= g.start && (s.t < g.end || (g.index == last && s.t <= g.end)))
            .map_or(0, |g| g.index);
        writeln!(out, "{:.6},{:.9e},{seg}", s.t, s.theta).map_err(err)?;
    }
    out.flush().map_err(err)
}
