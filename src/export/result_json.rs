//! `result.json`: the headline numbers with their uncertainties (G by deflection with its GUM budget
//! and Monte Carlo check, G by initial acceleration, period, torsion constant, deflection angle,
//! far-sphere correction), the per-segment results, and the relative difference from CODATA 2018 G.

use crate::analysis::Analysis;
use crate::physics::{G_CODATA_2018, G_CODATA_2018_U};
use serde_json::{json, Value};
use std::io::Write;
use std::path::{Path, PathBuf};

/// A file that could not be written.
#[derive(Debug, thiserror::Error)]
#[error("{path}: {source}; check that the output folder exists and is writable")]
pub struct WriteError {
    pub path: PathBuf,
    #[source]
    pub source: std::io::Error,
}

impl WriteError {
    pub fn new(path: &Path, source: std::io::Error) -> Self {
        Self {
            path: path.to_path_buf(),
            source,
        }
    }
}

fn finite(v: f64) -> Value {
    if v.is_finite() {
        json!(v)
    } else {
        Value::Null
    }
}

fn vu(value: f64, u: f64) -> Value {
    json!({"value": finite(value), "u": finite(u)})
}

/// One object per fitted segment.
fn segments_value(a: &Analysis) -> Vec<Value> {
    a.segments
        .iter()
        .map(|s| {
            json!({
                "index": s.index,
                "label": s.label,
                "start_s": s.start,
                "end_s": s.end,
                "t_ref_s": s.t_ref,
                "points": s.points,
                "outliers": s.outliers,
                "equilibrium_rad": vu(s.equilibrium.value, s.equilibrium.u),
                "period_s": s.period.map(|p| vu(p.value, p.u)),
                "damping_time_s": finite(s.damping_time),
                "residual_rms_rad": finite(s.residual_rms),
                "residual_lag1_correlation": finite(s.fit.noise.lag1),
                "residual_correlation_samples": finite(s.fit.noise.tau_samples),
                "turning_rest_rad": s.turning_rest.map(|m| vu(m.value, m.u)),
                "period_used": s.used_for_period,
                "note": s.note,
            })
        })
        .collect()
}

/// The result document.
pub fn result_value(a: &Analysis) -> Value {
    let unit_g = "m^3 kg^-1 s^-2";
    let segments = segments_value(a);
    let budget: Vec<Value> =
        a.g.budget
            .iter()
            .map(|l| {
                json!({
                    "input": l.input, "value": finite(l.value), "u": finite(l.u), "unit": l.unit,
                    "sensitivity": finite(l.sensitivity), "contribution": finite(l.contribution),
                    "share": finite(l.share),
                })
            })
            .collect();
    let acc = a.acceleration.as_ref().map(|x| {
        json!({
            "G": {"value": finite(x.g.value), "u": finite(x.g.u), "unit": unit_g},
            "alpha_rad_per_s2": vu(x.acceleration.alpha.value, x.acceleration.alpha.u),
            "per_move": x.acceleration.per_move.iter().map(|m| json!({
                "t_s": m.t, "jump_rad_per_s2": vu(m.jump.value, m.jump.u)})).collect::<Vec<_>>(),
            "ratio_to_deflection": vu(x.ratio_to_deflection.value, x.ratio_to_deflection.u),
        })
    });
    json!({
        "G": {"value": finite(a.g.value), "u": finite(a.g.u), "unit": unit_g},
        "G_monte_carlo": {
            "mean": finite(a.g_mc.mean), "u": finite(a.g_mc.u),
            "interval_95": [finite(a.g_mc.low95), finite(a.g_mc.high95)],
            "draws": a.g_mc.draws, "unit": unit_g,
        },
        "G_acceleration": acc,
        "codata_2018": {"value": G_CODATA_2018, "u": G_CODATA_2018_U, "unit": unit_g},
        "relative_difference_from_codata_2018": finite(a.codata_relative_difference),
        "period_s": vu(a.period.value, a.period.u),
        "period_birge_ratio": a.period_birge.map(finite),
        "damping_time_s": finite(if a.gamma.value > 0.0 { 1.0 / a.gamma.value } else { f64::INFINITY }),
        "kappa_N_m_per_rad": vu(a.kappa.value, a.kappa.u),
        "inertia_kg_m2": vu(a.inertia.value, a.inertia.u),
        "theta_rad": vu(a.deflection.theta_g.value, a.deflection.theta_g.u),
        "theta_estimates_rad": a.deflection.estimates,
        "theta_scatter_rad": a.deflection.scatter.map(finite),
        "theta_birge_ratio": a.deflection.birge.map(finite),
        "drift_cancelled_by_triples": a.deflection.triples,
        "beta": finite(a.beta),
        "pull_corrections": json!({
            "rod_over_spheres": finite(a.pull.rod),
            "stiffness_over_torque": finite(a.pull.stiffness),
        }),
        "budget": budget,
        "segments": segments,
        "moves_s": a.moves,
        "moves_from_events": a.moves_from_events,
        "moves_logged_s": a.moves_logged,
        "segments_refused": a.refused.iter().map(|r| json!({
            "index": r.index, "label": r.label, "start_s": r.start, "end_s": r.end,
            "reason": r.reason})).collect::<Vec<_>>(),
        "outliers": a.outliers,
        "spectrum_peak_period_s": finite(a.spectrum.period()),
        "samples_used": a.samples_used,
        "samples_dropped_nonfinite": a.dropped_nonfinite,
        "gaps_s": a.gaps,
        "warnings": a.warnings,
    })
}

/// Write `result.json`.
pub fn write_result_json(path: &Path, a: &Analysis) -> Result<(), WriteError> {
    let text = serde_json::to_string_pretty(&result_value(a))
        .map_err(|e| WriteError::new(path, std::io::Error::other(e.to_string())))?;
    crate::outfile::write_whole(path, |out| {
        out.write_all(text.as_bytes())?;
        out.write_all(b"\n")
    })
    .map_err(|e| WriteError::new(path, e))
}
