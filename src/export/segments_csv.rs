//! `segments.csv`: one row per segment between mass moves — start and end, the fitted equilibrium and
//! its standard uncertainty, the segment's own natural period and its uncertainty (empty when the
//! segment was too short), the amplitude damping time, the residual RMS, the number of points, the
//! turning-point rest point, and whether the period was used (with the reason when not).

use crate::analysis::Analysis;
use std::io::Write;
use std::path::Path;

use super::result_json::WriteError;

fn cell(text: &str) -> String {
    if text.contains([',', '"', '\n']) {
        format!("\"{}\"", text.replace('"', "\"\""))
    } else {
        text.to_string()
    }
}

/// Write the per-segment table.
pub fn write_segments_csv(path: &Path, analysis: &Analysis) -> Result<(), WriteError> {
    crate::outfile::write_whole(path, |out| write_rows(out, analysis))
        .map_err(|source| WriteError::new(path, source))
}

fn write_rows(out: &mut impl Write, analysis: &Analysis) -> std::io::Result<()> {
    writeln!(
        out,
        "segment,label,start_s,end_s,t_ref_s,equilibrium_rad,u_equilibrium_rad,period_s,u_period_s,damping_time_s,residual_rms_rad,points,turning_rest_rad,u_turning_rest_rad,period_used,note"
    )
    ?;
    for s in &analysis.segments {
        let (p, up) = s.period.map_or((String::new(), String::new()), |p| {
            (format!("{:.6}", p.value), format!("{:.3e}", p.u))
        });
        let (tr, utr) = s.turning_rest.map_or((String::new(), String::new()), |m| {
            (format!("{:.9e}", m.value), format!("{:.3e}", m.u))
        });
        let damping = if s.damping_time.is_finite() {
            format!("{:.3}", s.damping_time)
        } else {
            String::new()
        };
        writeln!(
            out,
            "{},{},{:.3},{:.3},{:.3},{:.9e},{:.3e},{p},{up},{damping},{:.3e},{},{tr},{utr},{},{}",
            s.index,
            cell(&s.label),
            s.start,
            s.end,
            s.t_ref,
            s.equilibrium.value,
            s.equilibrium.u,
            s.residual_rms,
            s.points,
            s.used_for_period,
            cell(s.note.as_deref().unwrap_or(""))
        )?;
    }
    Ok(())
}
