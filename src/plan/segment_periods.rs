//! A fibre trial's track cut at the moves found in it: one period per stretch of free swing, their
//! consistency, and the period the trial uses.
//!
//! A test body disturbed between swings (re-started, knocked, a mass moved) gives a track of several
//! segments; fitting one damped sinusoid across them gives a meaningless period. The moves are found
//! with the analyzer's step detector; each segment long enough to fit (1.5 periods, as for a whole
//! track) gets its own period. Two periods disagree when they differ by more than twice the root sum
//! of squares of their standard uncertainties (coverage factor 2, JCGM 100 section 6.2).

use crate::plan::trial::{fit_period, swing_of};
use crate::plan::PlanError;
use crate::units::Measured;
use std::path::Path;

/// One stretch of free swing in a track.
#[derive(Debug, Clone, PartialEq)]
pub struct SegmentPeriod {
    /// First and last time of the stretch, s.
    pub start_s: f64,
    pub end_s: f64,
    /// Its fitted period, or why it was not fitted.
    pub period: Result<Measured, String>,
}

/// The segments' periods and what they add up to.
#[derive(Debug, Clone, PartialEq)]
pub struct TrackPeriods {
    pub segments: Vec<SegmentPeriod>,
    /// Inverse-variance weighted mean of the fitted periods; its uncertainty is scaled up by the
    /// Birge ratio `sqrt(chi^2 / (n - 1))` when that is above one.
    pub period: Measured,
    /// Pairs of segments (indices) whose periods disagree beyond their uncertainties.
    pub disagreeing: Vec<(usize, usize)>,
}

/// Periods of each segment of the track at `path`.
pub fn periods_from_track(path: &Path) -> Result<TrackPeriods, PlanError> {
    let track = crate::track::read_track(path).map_err(|cause| PlanError::TrackRead {
        path: path.to_path_buf(),
        cause,
    })?;
    let (t, y) = swing_of(&track);
    let whole = fit_period(path, &t, &y);
    let moves = match &whole {
        Ok(_) => {
            crate::analysis::moves::find_moves(&t, &y, None, &Default::default(), &mut Vec::new())
                .map(|m| (m.moves, m.guard))
                .unwrap_or_default()
        }
        Err(_) => (Vec::new(), 0.0),
    };
    if moves.0.is_empty() {
        let period = whole?;
        let segments = vec![SegmentPeriod {
            start_s: t[0],
            end_s: t[t.len() - 1],
            period: Ok(period),
        }];
        return Ok(combine(segments, period));
    }
    let segments = cut(&t, &moves.0, moves.1)
        .into_iter()
        .map(|(a, b)| SegmentPeriod {
            start_s: t[a],
            end_s: t[b - 1],
            period: fit_period(path, &t[a..b], &y[a..b]).map_err(|e| e.to_string()),
        })
        .collect::<Vec<_>>();
    let Some(first_ok) = segments.iter().find_map(|s| s.period.clone().ok()) else {
        return Err(whole.err().unwrap_or(PlanError::TrackNoFrequency {
            path: path.to_path_buf(),
        }));
    };
    Ok(combine(segments, first_ok))
}

/// Index ranges of the stretches between `moves`, leaving `guard` seconds either side of each.
fn cut(t: &[f64], moves: &[f64], guard: f64) -> Vec<(usize, usize)> {
    let mut edges = vec![(f64::NEG_INFINITY, f64::INFINITY)];
    for &m in moves {
        edges.last_mut().expect("one range at least").1 = m - guard;
        edges.push((m + guard, f64::INFINITY));
    }
    edges
        .into_iter()
        .filter_map(|(lo, hi)| {
            let a = t.partition_point(|&v| v < lo);
            let b = t.partition_point(|&v| v <= hi);
            (b > a).then_some((a, b))
        })
        .collect()
}

/// The weighted mean and the disagreeing pairs; `fallback` when only one segment was fitted.
fn combine(segments: Vec<SegmentPeriod>, fallback: Measured) -> TrackPeriods {
    let fitted: Vec<(usize, Measured)> = segments
        .iter()
        .enumerate()
        .filter_map(|(i, s)| s.period.clone().ok().map(|p| (i, p)))
        .collect();
    let mut disagreeing = Vec::new();
    for (k, &(i, p)) in fitted.iter().enumerate() {
        for &(j, q) in &fitted[k + 1..] {
            if (p.value - q.value).abs() > 2.0 * p.u.hypot(q.u) {
                disagreeing.push((i, j));
            }
        }
    }
    let period = if fitted.len() < 2 || fitted.iter().any(|(_, p)| p.u.is_nan() || p.u <= 0.0) {
        fitted.first().map(|&(_, p)| p).unwrap_or(fallback)
    } else {
        let w: f64 = fitted.iter().map(|(_, p)| p.u.powi(-2)).sum();
        let mean = fitted
            .iter()
            .map(|(_, p)| p.value / (p.u * p.u))
            .sum::<f64>()
            / w;
        let chi2: f64 = fitted
            .iter()
            .map(|(_, p)| ((p.value - mean) / p.u).powi(2))
            .sum();
        let birge = (chi2 / (fitted.len() - 1) as f64).sqrt().max(1.0);
        Measured::new(mean, birge / w.sqrt())
    };
    TrackPeriods {
        segments,
        period,
        disagreeing,
    }
}
