//! The fourth step: each fitted segment's result (equilibrium, own period, damping, turning-point
//! rest point, label), and the deflection `theta_G` the segments' equilibria combine to.

use super::damped::{GAMMA, X_EQ};
use super::fit::Seg;
use super::gravity::{self, Deflection};
use super::segments::Event;
use super::{turning, AnalysisError, SegmentResult};
use crate::units::Measured;
use std::f64::consts::PI;

/// The results of the fitted `segs` (the samples `(t, y)`; `period0` the combined natural period, s),
/// labelled from `events` when given, otherwise alternately A and B over `count` segments.
pub fn segment_results(
    t: &[f64],
    y: &[f64],
    segs: Vec<Seg>,
    count: usize,
    events: Option<&[Event]>,
    period0: f64,
) -> Vec<SegmentResult> {
    let labels: Vec<String> = match events {
        Some(ev) => ev.iter().map(|e| e.label.clone()).collect(),
        None => (0..count)
            .map(|k| if k % 2 == 0 { "A" } else { "B" }.to_string())
            .collect(),
    };
    segs.into_iter()
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
        .collect()
}

/// The deflection from the segments' equilibria, with remarks on how far it can be trusted.
pub fn combine_equilibria(
    segments: &[SegmentResult],
    warnings: &mut Vec<String>,
) -> Result<Deflection, AnalysisError> {
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
    Ok(deflection)
}
