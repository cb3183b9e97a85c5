//! `angle.csv`: the twist-angle series the analysis used, one row per sample (`t_s,theta_rad,segment`),
//! the segment being 1-based (0 for samples outside every segment). Written whole
//! through a temporary file, renamed into place when complete.

use crate::analysis::{Analysis, Sample};
use std::io::Write;
use std::path::Path;

use super::result_json::WriteError;

/// Write `samples` with the segment each one was fitted in.
pub fn write_angle_csv(
    path: &Path,
    samples: &[Sample],
    analysis: &Analysis,
) -> Result<(), WriteError> {
    crate::outfile::write_whole(path, |out| write_rows(out, samples, analysis))
        .map_err(|source| WriteError::new(path, source))
}

fn write_rows(
    out: &mut impl Write,
    samples: &[Sample],
    analysis: &Analysis,
) -> std::io::Result<()> {
    writeln!(out, "t_s,theta_rad,segment")?;
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
        writeln!(out, "{:.6},{:.9e},{seg}", s.t, s.theta)?;
    }
    Ok(())
}
