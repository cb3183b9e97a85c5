//! The third step: a damped-sinusoid-plus-drift fit per segment between the moves. The long
//! segments are fitted in full; their periods and decay rates combine (weighted means, the period's
//! uncertainty scaled up by the Birge ratio when they scatter); the short or failed segments are then
//! fitted with that period and decay held. Moves found in the trace are refined once the oscillation
//! is known, and the segments fitted again.

use super::damped::{self, fit_damped, fit_fixed_frequency, DampedFit, GAMMA, X_EQ};
use super::moves::{refine_moves, Moves};
use super::{AnalysisError, AnalysisOptions};
use crate::units::Measured;
use std::f64::consts::PI;

/// One segment while being fitted.
#[derive(Debug, Clone, PartialEq)]
pub struct Seg {
    /// Range of the fitted samples, `t[a..b]`.
    pub idx: (usize, usize),
    pub start: f64,
    pub end: f64,
    /// Whether the segment's own period entered the combined one.
    pub long: bool,
    pub fit: Option<DampedFit>,
    pub note: Option<String>,
}

/// Segment fits and the period and damping they share.
#[derive(Debug, Clone, PartialEq)]
pub struct Fitted {
    /// Segment start and end times, s.
    pub bounds: Vec<(f64, f64)>,
    pub segs: Vec<Seg>,
    /// Combined natural angular frequency, rad/s.
    pub omega0: Measured,
    /// Birge ratio of the segments' frequencies, when two or more.
    pub birge: Option<f64>,
    /// Combined decay rate, 1/s.
    pub gamma: Measured,
    /// The decay rate used for held fits (not negative), 1/s.
    pub gamma_v: f64,
    /// Damped angular frequency used for held fits, rad/s.
    pub omega_d: f64,
}

/// Fit the segments between `found`'s moves; moves found in the trace are refined with the first
/// fits' oscillation and the segments fitted again. Returns the moves used and the fits; only the
/// final pass's remarks go to `warnings`.
pub fn fit_run(
    t: &[f64],
    y: &[f64],
    found: &Moves,
    opts: &AnalysisOptions,
    warnings: &mut Vec<String>,
) -> Result<(Vec<f64>, Fitted), AnalysisError> {
    let (guard, t_fft) = (found.guard, found.spectrum.period());
    let mut first_pass = Vec::new();
    let fitted = fit_segments(t, y, &found.moves, guard, t_fft, opts, &mut first_pass)?;
    if found.detection.is_none() {
        warnings.extend(first_pass);
        return Ok((found.moves.clone(), fitted));
    }
    // Found moves: refine each time with the exact step response, then fit again.
    let moves = refine_moves(t, y, &found.moves, fitted.gamma_v, fitted.omega_d);
    let mut w2 = Vec::new();
    let fitted = fit_segments(t, y, &moves, guard, t_fft, opts, &mut w2)?;
    warnings.extend(w2);
    Ok((moves, fitted))
}

/// Fit every segment between `moves` (full fits for the long ones, then the short ones with the
/// combined period and damping), leaving `guard` s out either side of each move.
pub fn fit_segments(
    t: &[f64],
    y: &[f64],
    moves: &[f64],
    guard: f64,
    t_fft: f64,
    opts: &AnalysisOptions,
    warnings: &mut Vec<String>,
) -> Result<Fitted, AnalysisError> {
    let bounds = segment_bounds(t, moves);
    if bounds.len() < 2 {
        return Err(AnalysisError::OneSegment);
    }
    let mut segs: Vec<Seg> = bounds
        .iter()
        .enumerate()
        .map(|(k, &(s, e))| {
            let lo_t = if k > 0 { s + guard } else { s };
            let hi_t = if k + 1 < bounds.len() {
                e - guard
            } else {
                e + 1.0
            };
            let a = t.partition_point(|&v| v < lo_t);
            let b = t.partition_point(|&v| v < hi_t);
            let seg = Seg {
                idx: (a, b),
                start: s,
                end: e,
                long: e - s >= opts.min_periods * t_fft && b - a >= 16,
                fit: None,
                note: None,
            };
            fit_free(t, y, k, seg, t_fft, opts, warnings)
        })
        .collect();
    let (omega0, birge, gamma) = combine_frequency(&segs, t_fft, opts, warnings)?;
    let gamma_v = gamma.value.max(0.0);
    let omega_d = (omega0.value.powi(2) - gamma_v.powi(2)).max(0.0).sqrt();
    for (k, seg) in segs.iter_mut().enumerate() {
        if seg.fit.is_none() {
            seg.fit = Some(fit_held(t, y, k, seg, gamma_v, omega_d, opts)?);
        }
    }
    Ok(Fitted {
        bounds,
        segs,
        omega0,
        birge,
        gamma,
        gamma_v,
        omega_d,
    })
}

/// Segment `(start, end)` times: from the first sample to the first move, between moves, and from
/// the last move to the last sample.
fn segment_bounds(t: &[f64], moves: &[f64]) -> Vec<(f64, f64)> {
    let n = t.len();
    let mut bounds: Vec<(f64, f64)> = Vec::with_capacity(moves.len() + 1);
    let mut lo = t[0];
    for &m in moves {
        bounds.push((lo, m));
        lo = m;
    }
    bounds.push((lo, t[n - 1]));
    bounds
}

/// Segment `k` (0-based) fitted in full when `seg.long` (it lasts long enough); otherwise, or when
/// the fit fails or sees no oscillation, a note and no fit yet.
fn fit_free(
    t: &[f64],
    y: &[f64],
    k: usize,
    mut seg: Seg,
    t_fft: f64,
    opts: &AnalysisOptions,
    warnings: &mut Vec<String>,
) -> Seg {
    let ((a, b), s, e) = (seg.idx, seg.start, seg.end);
    let length = e - s;
    let mut note = |seg: &mut Seg, msg: String| {
        warnings.push(msg.clone());
        seg.note = Some(msg);
    };
    if !seg.long {
        let msg = format!(
            "segment {} ({s:.1} s to {e:.1} s) lasts {:.2} periods (< {}): left out of the period; its equilibrium is fitted with the other segments' period and damping",
            k + 1,
            length / t_fft,
            opts.min_periods
        );
        note(&mut seg, msg);
        return seg;
    }
    let (ts, ys) = (&t[a..b], &y[a..b]);
    let t_mid = 0.5 * (ts[0] + ts[ts.len() - 1]);
    match fit_damped(ts, ys, s, t_mid, 2.0 * PI / t_fft, opts.fit_drift) {
        Ok(f) => {
            let amp = f.amplitude();
            if amp > 10.0 * f.rms && amp > 1e-9 * (f.params[X_EQ].abs() + amp) {
                seg.fit = Some(f);
            } else {
                let msg = format!(
                    "segment {} ({s:.1} s to {e:.1} s): no oscillation seen (amplitude {amp:.2e} rad against residuals {:.2e} rad); left out of the period",
                    k + 1,
                    f.rms
                );
                note(&mut seg, msg);
                seg.long = false;
            }
        }
        Err(source) => {
            let msg = format!(
                "segment {} ({s:.1} s to {e:.1} s): {source}; left out of the period",
                k + 1
            );
            note(&mut seg, msg);
            seg.long = false;
        }
    }
    seg
}

/// The combined natural angular frequency (with the Birge ratio of the segments' values) and decay
/// rate from the segments fitted in full.
fn combine_frequency(
    segs: &[Seg],
    t_fft: f64,
    opts: &AnalysisOptions,
    warnings: &mut Vec<String>,
) -> Result<(Measured, Option<f64>, Measured), AnalysisError> {
    let omegas: Vec<Measured> = segs
        .iter()
        .filter_map(|s| s.fit.as_ref())
        .map(|f| {
            let (w, u) = f.omega0();
            Measured::new(w, u)
        })
        .collect();
    let gammas: Vec<Measured> = segs
        .iter()
        .filter_map(|s| s.fit.as_ref())
        .map(|f| Measured::new(f.params[GAMMA], f.u(GAMMA)))
        .collect();
    let Some((mut omega0, birge)) = weighted_mean(&omegas) else {
        return Err(AnalysisError::NoPeriod {
            min: opts.min_periods,
            period: t_fft,
        });
    };
    if let Some(b) = birge {
        if b > 1.0 {
            omega0.u *= b;
            warnings.push(format!(
                "the segments' periods scatter more than their uncertainties (Birge ratio {b:.2}): the period's uncertainty is scaled up by that factor"
            ));
        }
    }
    let (gamma, _) = weighted_mean(&gammas).unwrap_or((Measured::exact(0.0), None));
    Ok((omega0, birge, gamma))
}

/// Segment `k` (0-based) fitted with decay rate `gamma_v` and damped angular frequency `omega_d`
/// held.
fn fit_held(
    t: &[f64],
    y: &[f64],
    k: usize,
    seg: &Seg,
    gamma_v: f64,
    omega_d: f64,
    opts: &AnalysisOptions,
) -> Result<DampedFit, AnalysisError> {
    let (a, b) = seg.idx;
    let (ts, ys) = (&t[a..b], &y[a..b]);
    if ts.len() < 8 {
        return Err(AnalysisError::Fit {
            segment: k + 1,
            start: seg.start,
            end: seg.end,
            source: damped::FitError::TooFew { n: ts.len(), p: 4 },
        });
    }
    let t_mid = 0.5 * (ts[0] + ts[ts.len() - 1]);
    fit_fixed_frequency(ts, ys, seg.start, t_mid, gamma_v, omega_d, opts.fit_drift).map_err(
        |source| AnalysisError::Fit {
            segment: k + 1,
            start: seg.start,
            end: seg.end,
            source,
        },
    )
}

/// Inverse-variance weighted mean and, with two or more values, the Birge ratio; a plain mean
/// (uncertainty zero, no ratio) when any uncertainty is missing or zero.
fn weighted_mean(v: &[Measured]) -> Option<(Measured, Option<f64>)> {
    if v.is_empty() {
        return None;
    }
    if v.iter().any(|m| m.u.is_nan() || m.u <= 0.0) {
        let mean = v.iter().map(|m| m.value).sum::<f64>() / v.len() as f64;
        return Some((Measured::new(mean, 0.0), None));
    }
    let sw: f64 = v.iter().map(|m| 1.0 / (m.u * m.u)).sum();
    let mean = v.iter().map(|m| m.value / (m.u * m.u)).sum::<f64>() / sw;
    let u = (1.0 / sw).sqrt();
    let birge = (v.len() >= 2).then(|| {
        let chi2: f64 = v.iter().map(|m| ((m.value - mean) / m.u).powi(2)).sum();
        (chi2 / (v.len() as f64 - 1.0)).sqrt()
    });
    Some((Measured::new(mean, u), birge))
}
