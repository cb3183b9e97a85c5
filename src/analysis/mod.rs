//! Analysis: twist-angle series to period, segment equilibria, G and its uncertainty budget.
//!
//! [`analyze`] takes plain samples `(t, theta)`, the apparatus ([`Setup`]) and optionally the times the
//! masses were moved, and runs the stages in order:
//! 1. [`period`]: spectrum peak as the frequency's starting guess;
//! 2. [`segments`]: the moves (given, or found in the trace) cut the run into segments;
//! 3. [`damped`]: a damped-sinusoid-plus-drift fit per segment (equilibrium, period, damping);
//!    [`turning`]: the turning-point rest point beside it;
//! 4. [`gravity`]: `theta_G` from A-B-A triples, `kappa = I omega_0^2`, G by deflection and by the
//!    initial acceleration;
//! 5. [`uncertainty`]: GUM budget and Monte Carlo propagation.
//!
//! Samples with a non-finite time or angle are dropped (and counted); gaps are simply absent samples,
//! so every fit uses only what was measured.

pub mod damped;
pub mod gravity;
pub mod period;
pub mod segments;
pub mod turning;
pub mod uncertainty;

pub use segments::{read_events, Event, EventsError};

use crate::lever::Lever;
use crate::physics;
use crate::setup::Setup;
use crate::track::TrackFile;
use crate::units::Measured;
use damped::{fit_damped, fit_fixed_frequency, DampedFit, GAMMA, X_EQ};
use std::f64::consts::PI;

/// One sample of the twist angle.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Sample {
    /// Seconds since the start of the run.
    pub t: f64,
    /// Twist angle, rad.
    pub theta: f64,
}

/// Knobs of the analysis; the defaults suit a typical run.
#[derive(Debug, Clone, PartialEq)]
pub struct AnalysisOptions {
    /// Fit a linear drift in each segment.
    pub fit_drift: bool,
    /// Segments shorter than this many periods do not contribute to the period.
    pub min_periods: f64,
    /// Length of the windows either side of a move for the acceleration method, in periods.
    pub accel_window_periods: f64,
    /// Samples within this many periods of a move found in the trace are left out of the fits (the
    /// found time is uncertain by a small fraction of a period).
    pub detect_guard_periods: f64,
    /// Monte Carlo draws (JCGM 101 asks for at least 1e5 for a 95 % interval to two digits).
    pub mc_draws: usize,
    pub mc_seed: u64,
}

impl Default for AnalysisOptions {
    fn default() -> Self {
        Self {
            fit_drift: true,
            min_periods: 1.5,
            accel_window_periods: 0.5,
            detect_guard_periods: 0.05,
            mc_draws: 200_000,
            mc_seed: 20_181,
        }
    }
}

/// One segment's results.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct SegmentResult {
    pub index: usize,
    pub label: String,
    /// Segment start and end, s.
    pub start: f64,
    pub end: f64,
    /// Time the equilibrium refers to (midway through the fitted samples), s.
    pub t_ref: f64,
    /// Samples fitted.
    pub points: usize,
    /// Fitted equilibrium, rad.
    pub equilibrium: Measured,
    /// Natural period from this segment's own fit, s (`None` when too short).
    pub period: Option<Measured>,
    /// Amplitude 1/e time `1/gamma`, s (infinite when no damping is seen).
    pub damping_time: f64,
    /// Root-mean-square residual, rad.
    pub residual_rms: f64,
    /// Whether this segment's period entered the combined period.
    pub used_for_period: bool,
    /// Why not, or other remarks.
    pub note: Option<String>,
    /// Rest point from the turning points, rad.
    pub turning_rest: Option<Measured>,
    pub fit: DampedFit,
}

/// G by the initial-acceleration method.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct AccelerationResult {
    pub acceleration: gravity::Acceleration,
    pub g: uncertainty::Gum,
    /// `G_acceleration / G_deflection = alpha / (2 omega_0^2 theta_G)`; the apparatus' geometry cancels,
    /// so its uncertainty is the statistical one only.
    pub ratio_to_deflection: Measured,
}

/// Everything the analysis found.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Analysis {
    /// Samples used (finite).
    pub samples_used: usize,
    /// Samples dropped for a non-finite time or angle.
    pub dropped_nonfinite: usize,
    /// Gaps longer than three sample spacings, `(from, to)` s.
    pub gaps: Vec<(f64, f64)>,
    pub spectrum: period::Spectrum,
    /// The step detector's output when the moves were found in the trace.
    pub detection: Option<segments::Detection>,
    /// Times of the mass moves between segments, s.
    pub moves: Vec<f64>,
    pub moves_from_events: bool,
    pub segments: Vec<SegmentResult>,
    /// Combined natural angular frequency, rad/s.
    pub omega0: Measured,
    /// Combined decay rate, 1/s.
    pub gamma: Measured,
    /// Natural period `2 pi / omega_0`, s.
    pub period: Measured,
    /// Birge ratio of the segments' periods (sqrt of chi^2 per degree of freedom), when two or more.
    pub period_birge: Option<f64>,
    /// Moment of inertia of the beam, kg m^2.
    pub inertia: Measured,
    /// Torsion constant, N m / rad.
    pub kappa: Measured,
    pub deflection: gravity::Deflection,
    /// Far-sphere correction `beta`.
    pub beta: f64,
    /// G by deflection, first-order (GUM) with its budget.
    pub g: uncertainty::Gum,
    /// G by deflection, Monte Carlo (JCGM 101).
    pub g_mc: uncertainty::MonteCarlo,
    pub acceleration: Option<AccelerationResult>,
    /// `G / G_CODATA2018 - 1`.
    pub codata_relative_difference: f64,
    pub warnings: Vec<String>,
}

/// What stopped an analysis.
#[derive(Debug, thiserror::Error)]
pub enum AnalysisError {
    #[error("only {0} usable samples: at least 32 are needed")]
    TooFewSamples(usize),
    #[error("sample {index} (t = {t} s) is not later than the one before it: samples must be in time order")]
    Unordered { index: usize, t: f64 },
    #[error("the track has no screen positions (no x_mm column): track the video again with --calib CALIB so that positions are in millimetres on the screen")]
    NoScreenPositions,
    #[error("spectrum: {0}")]
    Spectrum(#[from] period::SpectrumError),
    #[error("no mass move was found in the trace and no events were given: list the times the masses were moved in an events file (header 't_s,label', one row per segment start, e.g. '0,A' then '1800,B') and pass it with --events")]
    NoMoves,
    #[error("only one segment: G needs the equilibria of both mass positions (at least one move)")]
    OneSegment,
    #[error("no segment lasts {min} periods (period about {period:.1} s): the period cannot be fitted; record longer between moves")]
    NoPeriod { min: f64, period: f64 },
    #[error("segment {segment} ({start:.1} s to {end:.1} s): {source}")]
    Fit {
        segment: usize,
        start: f64,
        end: f64,
        #[source]
        source: damped::FitError,
    },
    #[error("the events leave fewer than 32 samples after the first event at {0} s")]
    EventsAfterData(f64),
    #[error("uncertainty propagation: {0}")]
    Propagation(#[from] uncertainty::PropagationError),
}

/// Twist angles from a track's screen positions through the lever. Rows without a position (lost
/// spot) are left out: they are gaps. Returns the samples and the number of rows left out.
pub fn samples_from_track(
    track: &TrackFile,
    lever: &Lever,
) -> Result<(Vec<Sample>, usize), AnalysisError> {
    if !track.has_mm {
        return Err(AnalysisError::NoScreenPositions);
    }
    let mut out = Vec::with_capacity(track.rows.len());
    let mut missing = 0;
    for r in &track.rows {
        match (r.screen, r.fix.status.has_position()) {
            (Some(p), true) => out.push(Sample {
                t: r.t.0,
                theta: lever.angle(p.x_mm * 1e-3).0,
            }),
            _ => missing += 1,
        }
    }
    Ok((out, missing))
}

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

/// One segment while being fitted.
struct Seg {
    idx: (usize, usize),
    start: f64,
    end: f64,
    long: bool,
    fit: Option<DampedFit>,
    note: Option<String>,
}

/// Segment fits and the period and damping they share.
struct Fitted {
    bounds: Vec<(f64, f64)>,
    segs: Vec<Seg>,
    omega0: Measured,
    birge: Option<f64>,
    gamma: Measured,
    gamma_v: f64,
    omega_d: f64,
}

/// Fit every segment between `moves` (full fits for the long ones, then the short ones with the
/// combined period and damping), leaving `guard` s out either side of each move.
fn fit_segments(
    t: &[f64],
    y: &[f64],
    moves: &[f64],
    guard: f64,
    t_fft: f64,
    opts: &AnalysisOptions,
    warnings: &mut Vec<String>,
) -> Result<Fitted, AnalysisError> {
    let n = t.len();
    let mut bounds: Vec<(f64, f64)> = Vec::with_capacity(moves.len() + 1);
    let mut lo = t[0];
    for &m in moves {
        bounds.push((lo, m));
        lo = m;
    }
    bounds.push((lo, t[n - 1]));
    if bounds.len() < 2 {
        return Err(AnalysisError::OneSegment);
    }
    // 3. Per-segment fits.
    let mut segs: Vec<Seg> = Vec::new();
    for (k, &(s, e)) in bounds.iter().enumerate() {
        let lo_t = if k > 0 { s + guard } else { s };
        let hi_t = if k + 1 < bounds.len() {
            e - guard
        } else {
            e + 1.0
        };
        let a = t.partition_point(|&v| v < lo_t);
        let b = t.partition_point(|&v| v < hi_t);
        let length = e - s;
        let long = length >= opts.min_periods * t_fft && b - a >= 16;
        let mut seg = Seg {
            idx: (a, b),
            start: s,
            end: e,
            long,
            fit: None,
            note: None,
        };
        if !long {
            let msg = format!(
                "segment {} ({s:.1} s to {e:.1} s) lasts {:.2} periods (< {}): left out of the period; its equilibrium is fitted with the other segments' period and damping",
                k + 1,
                length / t_fft,
                opts.min_periods
            );
            warnings.push(msg.clone());
            seg.note = Some(msg);
        } else {
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
                        warnings.push(msg.clone());
                        seg.note = Some(msg);
                        seg.long = false;
                    }
                }
                Err(source) => {
                    let msg = format!(
                        "segment {} ({s:.1} s to {e:.1} s): {source}; left out of the period",
                        k + 1
                    );
                    warnings.push(msg.clone());
                    seg.note = Some(msg);
                    seg.long = false;
                }
            }
        }
        segs.push(seg);
    }
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
    let gamma_v = gamma.value.max(0.0);
    let omega_d = (omega0.value.powi(2) - gamma_v.powi(2)).max(0.0).sqrt();
    for (k, seg) in segs.iter_mut().enumerate() {
        if seg.fit.is_none() {
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
            let f = fit_fixed_frequency(ts, ys, seg.start, t_mid, gamma_v, omega_d, opts.fit_drift)
                .map_err(|source| AnalysisError::Fit {
                    segment: k + 1,
                    start: seg.start,
                    end: seg.end,
                    source,
                })?;
            seg.fit = Some(f);
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

/// Run the whole analysis. `events`, when given, are the segment starts (the first one's position is
/// taken as A and positions alternate); otherwise the moves are found in the trace.
pub fn analyze(
    samples: &[Sample],
    setup: &Setup,
    events: Option<&[Event]>,
    opts: &AnalysisOptions,
) -> Result<Analysis, AnalysisError> {
    let mut warnings: Vec<String> = Vec::new();
    for k in &setup.without_uncertainty {
        warnings.push(format!(
            "setup {k} has no uncertainty: counted as exact in the budget"
        ));
    }
    // 1. Clean.
    let mut t: Vec<f64> = Vec::with_capacity(samples.len());
    let mut y: Vec<f64> = Vec::with_capacity(samples.len());
    let mut dropped = 0;
    for s in samples {
        if s.t.is_finite() && s.theta.is_finite() {
            if let Some(&last) = t.last() {
                if s.t <= last {
                    return Err(AnalysisError::Unordered {
                        index: t.len() + dropped,
                        t: s.t,
                    });
                }
            }
            t.push(s.t);
            y.push(s.theta);
        } else {
            dropped += 1;
        }
    }
    if dropped > 0 {
        warnings.push(format!(
            "{dropped} samples with a non-finite time or angle were left out (treated as gaps)"
        ));
    }
    // Leading samples before the first event have no known mass position.
    let mut first = 0;
    if let Some(ev) = events {
        if let Some(e0) = ev.first() {
            first = t.partition_point(|&v| v < e0.t);
            if first > 0 {
                warnings.push(format!(
                    "{first} samples before the first event ({} s) were left out",
                    e0.t
                ));
            }
            if t.len() - first < 32 {
                return Err(AnalysisError::EventsAfterData(e0.t));
            }
        }
    }
    let t = &t[first..];
    let y = &y[first..];
    let n = t.len();
    if n < 32 {
        return Err(AnalysisError::TooFewSamples(n));
    }
    let mut dts: Vec<f64> = t.windows(2).map(|w| w[1] - w[0]).collect();
    dts.sort_by(f64::total_cmp);
    let dt_med = dts[dts.len() / 2];
    let gaps: Vec<(f64, f64)> = t
        .windows(2)
        .filter(|w| w[1] - w[0] > 3.0 * dt_med)
        .map(|w| (w[0], w[1]))
        .collect();
    if !gaps.is_empty() {
        let total: f64 = gaps.iter().map(|g| g.1 - g.0).sum();
        warnings.push(format!(
            "{} gaps in the trace ({total:.0} s in all): fitted over, not filled in",
            gaps.len()
        ));
    }

    // 2. Spectrum and moves.
    let given: Option<Vec<f64>> = events.map(|ev| {
        ev.iter()
            .skip(1)
            .map(|e| e.t)
            .filter(|&v| v < t[n - 1])
            .collect()
    });
    let first_spec = period::spectrum(
        t,
        y,
        &period::SpectrumOptions {
            breaks: given.clone().unwrap_or_default(),
            differentiate: given.is_none(),
            ..Default::default()
        },
    )?;
    let (moves, detection, guard, spectrum) = match &given {
        Some(m) => (m.clone(), None, 0.0, first_spec),
        None => {
            // The first guess may be a sideband (phases restart at each move); alternate between
            // finding the moves and re-taking the spectrum stretch by stretch until they agree.
            let mut p = first_spec.period();
            let mut found = None;
            for _ in 0..5 {
                let d = segments::detect_moves(t, y, p, 0.0);
                if d.moves.is_empty() {
                    break;
                }
                let s = period::spectrum(
                    t,
                    y,
                    &period::SpectrumOptions {
                        breaks: d.moves.clone(),
                        ..Default::default()
                    },
                )?;
                let settled = (s.period() / p - 1.0).abs() < 0.01;
                p = s.period();
                found = Some((d, s));
                if settled {
                    break;
                }
            }
            let Some((_, s)) = found else {
                return Err(AnalysisError::NoMoves);
            };
            let d = segments::detect_moves(t, y, p, 0.0);
            if d.moves.is_empty() {
                return Err(AnalysisError::NoMoves);
            }
            (
                d.moves.clone(),
                Some(d),
                opts.detect_guard_periods * s.period(),
                s,
            )
        }
    };
    let t_fft = spectrum.period();
    let mut first_pass = Vec::new();
    let mut fitted = fit_segments(t, y, &moves, guard, t_fft, opts, &mut first_pass)?;
    let mut moves = moves;
    if detection.is_some() {
        // Found moves: refine each time with the exact step response, then fit again.
        let refined: Vec<f64> = moves
            .iter()
            .enumerate()
            .map(|(k, &m)| {
                let lo = if k == 0 {
                    t[0]
                } else {
                    0.5 * (moves[k - 1] + m)
                };
                let hi = moves.get(k + 1).map_or(t[n - 1], |&nx| 0.5 * (m + nx));
                segments::refine_move(t, y, m, lo, hi, fitted.gamma_v, fitted.omega_d).unwrap_or(m)
            })
            .collect();
        moves = refined;
        let mut w2 = Vec::new();
        fitted = fit_segments(t, y, &moves, guard, t_fft, opts, &mut w2)?;
        warnings.extend(w2);
    } else {
        warnings.extend(first_pass);
    }
    let Fitted {
        bounds,
        segs,
        omega0,
        birge,
        gamma,
        gamma_v,
        omega_d,
    } = fitted;
    let labels: Vec<String> = match events {
        Some(ev) => ev.iter().map(|e| e.label.clone()).collect(),
        None => (0..bounds.len())
            .map(|k| if k % 2 == 0 { "A" } else { "B" }.to_string())
            .collect(),
    };

    let period0 = 2.0 * PI / omega0.value;
    let segments: Vec<SegmentResult> = segs
        .into_iter()
        .enumerate()
        .filter_map(|(k, s)| {
            let f = s.fit?;
            let (a, b) = s.idx;
            let ext = turning::extremes(&t[a..b], &y[a..b], period0);
            let g = f.params[GAMMA];
            Some(SegmentResult {
                index: k + 1,
                label: labels.get(k).cloned().unwrap_or_default(),
                start: s.start,
                end: s.end,
                t_ref: f.t_mid,
                points: f.n,
                equilibrium: Measured::new(f.params[X_EQ], f.u(X_EQ)),
                period: (!f.frequency_fixed).then(|| {
                    let (w, u) = f.omega0();
                    Measured::new(2.0 * PI / w, 2.0 * PI * u / (w * w))
                }),
                damping_time: if g > 0.0 { 1.0 / g } else { f64::INFINITY },
                residual_rms: f.rms,
                used_for_period: s.long,
                note: s.note,
                turning_rest: turning::rest_point(&ext),
                fit: f,
            })
        })
        .collect();

    // 4. Deflection and G.
    let eqs: Vec<(f64, Measured)> = segments.iter().map(|s| (s.t_ref, s.equilibrium)).collect();
    let deflection = gravity::deflection(&eqs).ok_or(AnalysisError::OneSegment)?;
    if !deflection.triples {
        warnings.push(
            "only two segments: a drift of the zero is not cancelled (three or more segments let A-B-A triples cancel it)".into(),
        );
    }
    if !deflection.alternating {
        warnings.push("the equilibria do not alternate as expected for masses moved back and forth: check the events".into());
    }
    let period = Measured::new(period0, 2.0 * PI * omega0.u / omega0.value.powi(2));
    let lever = Lever::from_setup(setup);
    let half = gravity::half_scale(&lever, deflection.theta_mid, deflection.theta_g);
    let x_mid = 0.5
        * (lever.reading(crate::units::Radians(
            deflection.theta_mid + deflection.theta_g.value,
        )) + lever.reading(crate::units::Radians(
            deflection.theta_mid - deflection.theta_g.value,
        )));
    let inputs = gravity::deflection_inputs(setup, half, period);
    let model = gravity::g_deflection_model(setup, x_mid);
    let g = uncertainty::gum(&inputs, &model)?;
    let g_mc = uncertainty::monte_carlo(&inputs, &model, opts.mc_draws, opts.mc_seed)?;

    // Inertia and kappa with their uncertainties (GUM on the beam inputs).
    let mut beam_in = gravity::beam_inputs(setup);
    beam_in.push(uncertainty::Input::new(
        "period T0",
        period.value,
        period.u,
        "s",
    ));
    let t0_index = beam_in.len() - 1;
    let inertia_g = uncertainty::gum(&beam_in, gravity::inertia_of)?;
    let kappa_g = uncertainty::gum(&beam_in, |x| {
        physics::torsion_constant(gravity::inertia_of(x), 2.0 * PI / x[t0_index])
    })?;
    let beta = physics::far_sphere_beta(setup.sources.separation.value, setup.beam.arm.value);

    // 5. Acceleration method.
    let acceleration = gravity::acceleration(
        t,
        y,
        &moves,
        &bounds,
        opts.accel_window_periods * period0,
        guard,
        (gamma_v, omega_d),
    )
    .and_then(|acc| {
        let inputs = gravity::acceleration_inputs(setup, acc.alpha);
        let g_acc = uncertainty::gum(&inputs, gravity::g_acceleration_model(setup)).ok()?;
        let th = deflection.theta_g;
        let w0 = omega0;
        let r = acc.alpha.value / (2.0 * w0.value * w0.value * th.value);
        let rel =
            (acc.alpha.relative().powi(2) + (2.0 * w0.relative()).powi(2) + th.relative().powi(2))
                .sqrt();
        Some(AccelerationResult {
            acceleration: acc,
            g: g_acc,
            ratio_to_deflection: Measured::new(r, r.abs() * rel),
        })
    });
    if acceleration.is_none() {
        warnings.push("no move had enough samples either side for the acceleration method".into());
    }

    Ok(Analysis {
        samples_used: n,
        dropped_nonfinite: dropped,
        gaps,
        spectrum,
        detection,
        moves,
        moves_from_events: given.is_some(),
        segments,
        omega0,
        gamma,
        period,
        period_birge: birge,
        inertia: Measured::new(inertia_g.value, inertia_g.u),
        kappa: Measured::new(kappa_g.value, kappa_g.u),
        beta,
        codata_relative_difference: g.value / physics::G_CODATA_2018 - 1.0,
        deflection,
        g,
        g_mc,
        acceleration,
        warnings,
    })
}
