//! The third step: a damped-sinusoid-plus-drift fit per segment between the moves. The long
//! segments are fitted in full; a full fit whose swing is not well above its residuals, or whose period
//! lies far from the spectrum's, is refused for the period (never averaged in). The periods and decay
//! rates of the others combine (weighted means, the period's uncertainty scaled up by the Birge ratio
//! when they scatter); the short or refused segments are then fitted with that period and decay held.
//! Every fit leaves out stray samples ([`robust`]) and counts them. A segment whose held fit fails
//! too is refused with its own reason. The moves (found in the trace, or logged) are refined from the
//! data once the oscillation is known, and the segments fitted again.

use super::damped::{fit_damped, fit_fixed_frequency, DampedFit, GAMMA, X_EQ};
use super::moves::{refine_moves, Moves};
use super::{robust, AnalysisError, AnalysisOptions};
use crate::units::Measured;
use std::f64::consts::PI;

/// What a note says happens to a segment refused for the period.
const HELD: &str = ": its equilibrium is fitted with the other segments' period and damping";

/// When no segment lasts `min_periods`, those lasting this many periods give the period.
const SHORT_PERIODS: f64 = 1.0;

/// One segment while being fitted.
#[derive(Debug, Clone, PartialEq)]
pub struct Seg {
    /// Range of the fitted samples, `t[a..b]`.
    pub idx: (usize, usize),
    pub start: f64,
    pub end: f64,
    /// Position label, `A` or `B`.
    pub label: String,
    /// Whether the segment's own period entered the combined one.
    pub long: bool,
    pub fit: Option<DampedFit>,
    /// Indices (into the whole series) of the samples left out as outliers.
    pub rejected: Vec<usize>,
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

/// Time left out of a segment's fit after the move that starts it and before the move that ends it, s.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cut {
    pub after: f64,
    pub before: f64,
}

/// Fit the segments between `found`'s moves; the moves are refined with the first fits' oscillation
/// (found ones within a tenth of a period, logged ones within `opts.refine_reach_periods`) and the
/// segments fitted again. Returns the moves used and the fits; only the final pass's remarks go to
/// `warnings`.
pub fn fit_run(
    t: &[f64],
    y: &[f64],
    found: &Moves,
    opts: &AnalysisOptions,
    warnings: &mut Vec<String>,
) -> Result<(Vec<f64>, Fitted), AnalysisError> {
    let t_fft = found.spectrum.period();
    // Until refined, a logged time may be early or late: leave a settling time both sides.
    let cut = Cut {
        after: found.settle,
        before: found
            .guard
            .max(if found.from_events { found.settle } else { 0.0 }),
    };
    let mut first_pass = Vec::new();
    let fitted = fit_segments(
        t,
        y,
        &found.moves,
        &found.labels,
        cut,
        t_fft,
        opts,
        &mut first_pass,
    )?;
    let reach = if found.from_events {
        opts.refine_reach_periods
    } else {
        0.1
    };
    if reach <= 0.0 {
        warnings.extend(first_pass);
        return Ok((found.moves.clone(), fitted));
    }
    let moves = refine_moves(t, y, &found.moves, fitted.gamma_v, fitted.omega_d, reach);
    if found.from_events {
        note_refined(t, &found.moves, &moves, &found.lines, opts, warnings);
    }
    let cut = Cut {
        after: found.settle,
        before: found.guard.max(opts.detect_guard_periods * t_fft),
    };
    let mut w2 = Vec::new();
    let fitted = fit_segments(t, y, &moves, &found.labels, cut, t_fft, opts, &mut w2)?;
    warnings.extend(w2);
    Ok((moves, fitted))
}

/// A remark for each logged move whose time the data put more than two sample spacings away.
fn note_refined(
    t: &[f64],
    logged: &[f64],
    refined: &[f64],
    lines: &[usize],
    opts: &AnalysisOptions,
    warnings: &mut Vec<String>,
) {
    let dt = (t[t.len() - 1] - t[0]) / (t.len() - 1) as f64;
    let file = opts.events_file.as_deref().unwrap_or("events");
    for ((&l, &r), &line) in logged.iter().zip(refined).zip(lines) {
        if (r - l).abs() > 2.0 * dt {
            warnings.push(format!(
                "{file}, line {line}: the move logged at {l:.1} s is seen in the data at {r:.1} s ({:+.1} s): the data's time is used",
                r - l
            ));
        }
    }
}

/// Fit every segment between `moves` (full fits for the long ones, then the others with the
/// combined period and damping), leaving `cut` out around each move.
#[allow(clippy::too_many_arguments)]
pub fn fit_segments(
    t: &[f64],
    y: &[f64],
    moves: &[f64],
    labels: &[String],
    cut: Cut,
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
            let lo_t = if k > 0 { s + cut.after } else { s };
            let hi_t = if k + 1 < bounds.len() {
                e - cut.before
            } else {
                e + 1.0
            };
            let a = t.partition_point(|&v| v < lo_t);
            let b = t.partition_point(|&v| v < hi_t).max(a);
            let seg = Seg {
                idx: (a, b),
                start: s,
                end: e,
                label: labels.get(k).cloned().unwrap_or_default(),
                long: e - s >= opts.min_periods * t_fft && b - a >= 16,
                fit: None,
                rejected: Vec::new(),
                note: None,
            };
            fit_free(t, y, k, seg, t_fft, opts)
        })
        .collect();
    fall_back_to_short(t, y, &mut segs, t_fft, opts, warnings);
    refuse_stray_periods(&mut segs, t_fft);
    let (omega0, birge, gamma) = combine_frequency(&segs, t_fft, opts, warnings)?;
    let gamma_v = gamma.value.max(0.0);
    let omega_d = (omega0.value.powi(2) - gamma_v.powi(2)).max(0.0).sqrt();
    for (k, seg) in segs.iter_mut().enumerate() {
        if seg.fit.is_none() {
            fit_held(t, y, k, seg, gamma_v, omega_d, opts);
        }
        if let Some(n) = &seg.note {
            warnings.push(n.clone());
        }
        if !seg.rejected.is_empty() {
            warnings.push(format!(
                "{}: {} stray samples (residual over {} robust standard deviations) left out of the fit",
                seg_name(k, seg),
                seg.rejected.len(),
                robust::CLIP_SIGMAS
            ));
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

/// When no segment lasts `opts.min_periods`, those of at least [`SHORT_PERIODS`] are fitted in full
/// to give the period, with a warning.
fn fall_back_to_short(
    t: &[f64],
    y: &[f64],
    segs: &mut [Seg],
    t_fft: f64,
    opts: &AnalysisOptions,
    warnings: &mut Vec<String>,
) {
    if segs.iter().any(|s| s.long) {
        return;
    }
    for (k, seg) in segs.iter_mut().enumerate() {
        let (a, b) = seg.idx;
        if seg.end - seg.start >= SHORT_PERIODS * t_fft && b - a >= 16 {
            seg.long = true;
            seg.note = None;
            *seg = fit_free(t, y, k, seg.clone(), t_fft, opts);
        }
    }
    if segs.iter().any(|s| s.long) {
        warnings.push(format!(
            "no segment lasts {} periods: the period comes from segments of {SHORT_PERIODS} to {} periods, and is less certain; record longer between moves",
            opts.min_periods, opts.min_periods
        ));
    }
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

/// `Segment k (start to end)` for messages.
fn seg_name(k: usize, seg: &Seg) -> String {
    format!(
        "segment {} ({}, {:.1} s to {:.1} s)",
        k + 1,
        seg.label,
        seg.start,
        seg.end
    )
}

/// Segment `k` (0-based) fitted in full when `seg.long` (it lasts long enough); otherwise, or when
/// the fit fails or sees no oscillation well above its residuals, a note and no fit yet.
fn fit_free(
    t: &[f64],
    y: &[f64],
    k: usize,
    mut seg: Seg,
    t_fft: f64,
    opts: &AnalysisOptions,
) -> Seg {
    let (a, b) = seg.idx;
    let length = seg.end - seg.start;
    if !seg.long {
        seg.note = Some(format!(
            "{}: too short for its own period ({:.2} periods, {} needed){HELD}",
            seg_name(k, &seg),
            length / t_fft,
            opts.min_periods
        ));
        return seg;
    }
    let (ts, ys) = (&t[a..b], &y[a..b]);
    let t_mid = 0.5 * (ts[0] + ts[ts.len() - 1]);
    let s = seg.start;
    let fitter =
        |tt: &[f64], yy: &[f64]| fit_damped(tt, yy, s, t_mid, 2.0 * PI / t_fft, opts.fit_drift);
    match robust::clip_fit(ts, ys, fitter, |f, tt| f.eval(tt)) {
        Ok((f, out)) => {
            let amp = f.amplitude();
            if amp > 10.0 * f.rms && amp > 1e-9 * (f.params[X_EQ].abs() + amp) {
                seg.fit = Some(f);
                seg.rejected = out.into_iter().map(|i| i + a).collect();
            } else {
                seg.note = Some(format!(
                    "{}: swing too small for its own period (amplitude {amp:.2e} rad against residuals {:.2e} rad, 10 times needed){HELD}",
                    seg_name(k, &seg),
                    f.rms
                ));
                seg.long = false;
            }
        }
        Err(source) => {
            seg.note = Some(format!("{}: {source}{HELD}", seg_name(k, &seg)));
            seg.long = false;
        }
    }
    seg
}

/// A full fit whose period lies more than a fifth away from the spectrum's peak `t_fft` is a
/// degenerate fit (the oscillation mistaken for drift or the reverse): it is refused for the period and
/// fitted again with the period held.
fn refuse_stray_periods(segs: &mut [Seg], t_fft: f64) {
    for (k, seg) in segs.iter_mut().enumerate() {
        let Some(f) = &seg.fit else { continue };
        let p = 2.0 * PI / f.omega0().0;
        if (p / t_fft - 1.0).abs() > 0.2 {
            seg.note = Some(format!(
                "{}: its own fit gives a period of {p:.1} s, far from the spectrum's {t_fft:.1} s (a degenerate fit): refused for the period{HELD}",
                seg_name(k, seg)
            ));
            seg.fit = None;
            seg.long = false;
            seg.rejected.clear();
        }
    }
}

/// The combined natural angular frequency (with the Birge ratio of the segments' values) and decay
/// rate from the segments fitted in full.
fn combine_frequency(
    segs: &[Seg],
    t_fft: f64,
    opts: &AnalysisOptions,
    warnings: &mut Vec<String>,
) -> Result<(Measured, Option<f64>, Measured), AnalysisError> {
    let fits: Vec<&DampedFit> = segs.iter().filter_map(|s| s.fit.as_ref()).collect();
    if fits.is_empty() {
        let reasons: String = segs
            .iter()
            .filter_map(|s| s.note.as_ref())
            .map(|n| format!("\n  {}", n.trim_end_matches(HELD)))
            .collect();
        return Err(AnalysisError::NoPeriod {
            min: opts.min_periods,
            period: t_fft,
            reasons,
        });
    }
    let omegas: Vec<Measured> = fits
        .iter()
        .map(|f| {
            let (w, u) = f.omega0();
            Measured::new(w, u)
        })
        .collect();
    let gammas: Vec<Measured> = fits
        .iter()
        .map(|f| Measured::new(f.params[GAMMA], f.u(GAMMA)))
        .collect();
    let (mut omega0, birge) = weighted_mean(&omegas, "the segments' frequencies")?;
    if let Some(b) = birge {
        if b > 1.0 {
            omega0.u *= b;
            warnings.push(format!(
                "the segments' periods scatter more than their uncertainties (Birge ratio {b:.2}): the period's uncertainty is scaled up by that factor"
            ));
        }
    }
    let (gamma, _) = weighted_mean(&gammas, "the segments' decay rates")?;
    Ok((omega0, birge, gamma))
}

/// Segment `k` (0-based) fitted with decay rate `gamma_v` and damped angular frequency `omega_d`
/// held; when that fails too, the segment is refused (no fit) with the reason in its note.
fn fit_held(
    t: &[f64],
    y: &[f64],
    k: usize,
    seg: &mut Seg,
    gamma_v: f64,
    omega_d: f64,
    opts: &AnalysisOptions,
) {
    let (a, b) = seg.idx;
    let (ts, ys) = (&t[a..b], &y[a..b]);
    if ts.len() < 8 {
        seg.note = Some(format!(
            "{}: refused, only {} samples after leaving out the settling time around the moves (8 needed)",
            seg_name(k, seg),
            ts.len()
        ));
        return;
    }
    let t_mid = 0.5 * (ts[0] + ts[ts.len() - 1]);
    let s = seg.start;
    let fitter = |tt: &[f64], yy: &[f64]| {
        fit_fixed_frequency(tt, yy, s, t_mid, gamma_v, omega_d, opts.fit_drift)
    };
    match robust::clip_fit(ts, ys, fitter, |f, tt| f.eval(tt)) {
        Ok((f, out)) => {
            seg.fit = Some(f);
            seg.rejected = out.into_iter().map(|i| i + a).collect();
        }
        Err(source) => {
            seg.note = Some(format!("{}: refused, {source}", seg_name(k, seg)));
        }
    }
}

/// Inverse-variance weighted mean and, with two or more values, the Birge ratio. Values without a
/// positive uncertainty cannot be weighted: an error naming `what`.
fn weighted_mean(
    v: &[Measured],
    what: &'static str,
) -> Result<(Measured, Option<f64>), AnalysisError> {
    if v.is_empty()
        || v.iter()
            .any(|m| m.u.is_nan() || m.u <= 0.0 || m.u.is_infinite())
    {
        return Err(AnalysisError::ZeroUncertainty { what });
    }
    let sw: f64 = v.iter().map(|m| 1.0 / (m.u * m.u)).sum();
    let mean = v.iter().map(|m| m.value / (m.u * m.u)).sum::<f64>() / sw;
    let u = (1.0 / sw).sqrt();
    let birge = (v.len() >= 2).then(|| {
        let chi2: f64 = v.iter().map(|m| ((m.value - mean) / m.u).powi(2)).sum();
        (chi2 / (v.len() as f64 - 1.0)).sqrt()
    });
    Ok((Measured::new(mean, u), birge))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_weighted_mean_without_uncertainties_is_an_error() {
        let v = [Measured::new(1.0, 0.1), Measured::new(2.0, 0.0)];
        assert!(matches!(
            weighted_mean(&v, "x"),
            Err(AnalysisError::ZeroUncertainty { .. })
        ));
        // Equal weights: the plain mean, u = 0.1 / sqrt(2), Birge ratio |1 - 2| / 0.1 / sqrt(2).
        let v = [Measured::new(1.0, 0.1), Measured::new(2.0, 0.1)];
        let (m, b) = weighted_mean(&v, "x").unwrap();
        assert!((m.value - 1.5).abs() < 1e-12 && (m.u - 0.1 / 2f64.sqrt()).abs() < 1e-12);
        assert!((b.unwrap() - 10.0 / 2f64.sqrt()).abs() < 1e-9);
    }

    #[test]
    fn a_period_far_from_the_spectrum_is_refused_by_name() {
        let fit = |period: f64| DampedFit {
            params: [0.0, 1e-3, 0.0, 0.0, 2.0 * PI / period, 0.0],
            cov: [[1e-12; 6]; 6],
            t0: 0.0,
            t_mid: 0.0,
            n: 500,
            n_free: 6,
            rms: 1e-6,
            frequency_fixed: false,
            noise: crate::analysis::ar1::NoiseCorrelation::WHITE,
            white_cov: [[1e-12; 6]; 6],
        };
        let seg = |period: f64| Seg {
            idx: (0, 500),
            start: 0.0,
            end: 1500.0,
            label: "A".into(),
            long: true,
            fit: Some(fit(period)),
            rejected: Vec::new(),
            note: None,
        };
        // 4000 s against a 500 s spectrum peak is refused; 520 s is kept for the Birge ratio to judge.
        let mut segs = vec![seg(520.0), seg(4000.0)];
        refuse_stray_periods(&mut segs, 500.0);
        assert!(segs[0].fit.is_some() && segs[0].long);
        assert!(segs[1].fit.is_none() && !segs[1].long);
        let note = segs[1].note.as_deref().unwrap();
        assert!(
            note.starts_with("segment 2 (A,") && note.contains("4000.0 s"),
            "{note}"
        );
    }
}
