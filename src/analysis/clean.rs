//! The first step: from a track to samples, and from samples to the clean, time-ordered series the
//! fits use (non-finite samples dropped, the time order checked, gaps listed). Rows of a track whose
//! spot status carries no position (anything but `ok` and `saturated`) are gaps.

use super::{AnalysisError, Sample};
use crate::lever::Lever;
use crate::track::TrackFile;

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

/// The series the fits use.
#[derive(Debug, Clone, PartialEq)]
pub struct Clean {
    /// Sample times, s (increasing).
    pub t: Vec<f64>,
    /// Twist angles, rad.
    pub y: Vec<f64>,
    /// Samples dropped for a non-finite time or angle.
    pub dropped: usize,
    /// Gaps longer than three sample spacings, `(from, to)` s.
    pub gaps: Vec<(f64, f64)>,
}

/// Clean `samples`: drop the non-finite ones, check the time order and list the gaps. Remarks go to
/// `warnings`.
pub fn clean_samples(
    samples: &[Sample],
    warnings: &mut Vec<String>,
) -> Result<Clean, AnalysisError> {
    let (t, y, dropped) = finite_in_order(samples)?;
    if dropped > 0 {
        warnings.push(format!(
            "{dropped} samples with a non-finite time or angle were left out (treated as gaps)"
        ));
    }
    let n = t.len();
    if n < 32 {
        return Err(AnalysisError::TooFewSamples(n));
    }
    let gaps = find_gaps(&t);
    if !gaps.is_empty() {
        let total: f64 = gaps.iter().map(|g| g.1 - g.0).sum();
        warnings.push(format!(
            "{} gaps in the trace ({total:.0} s in all): fitted over, not filled in",
            gaps.len()
        ));
    }
    Ok(Clean {
        t,
        y,
        dropped,
        gaps,
    })
}

/// The finite samples as times and angles, and how many were not finite; an error at the first
/// finite sample not later than the one before it.
fn finite_in_order(samples: &[Sample]) -> Result<(Vec<f64>, Vec<f64>, usize), AnalysisError> {
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
    Ok((t, y, dropped))
}

/// Spans between samples longer than three median sample spacings.
fn find_gaps(t: &[f64]) -> Vec<(f64, f64)> {
    let mut dts: Vec<f64> = t.windows(2).map(|w| w[1] - w[0]).collect();
    dts.sort_by(f64::total_cmp);
    let dt_med = dts[dts.len() / 2];
    t.windows(2)
        .filter(|w| w[1] - w[0] > 3.0 * dt_med)
        .map(|w| (w[0], w[1]))
        .collect()
}
