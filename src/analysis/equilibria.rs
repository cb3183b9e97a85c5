//! The fourth step: each fitted segment's result (equilibrium, own period, damping, turning-point
//! rest point, label, stray samples left out), the segments refused with their reasons, and the
//! deflection `theta_G` the segments' equilibria combine to.

use super::damped::{GAMMA, X_EQ};
use super::fit::Seg;
use super::gravity::{self, Deflection};
use super::types::RefusedSegment;
use super::{turning, AnalysisError, SegmentResult};
use crate::units::Measured;
use std::f64::consts::PI;

/// The results of the fitted `segs` (the samples `(t, y)`; `period0` the combined natural period, s)
/// and the segments without a fit, refused with the reason in their note.
pub fn segment_results(
    t: &[f64],
    y: &[f64],
    segs: Vec<Seg>,
    period0: f64,
) -> (Vec<SegmentResult>, Vec<RefusedSegment>) {
    let mut done = Vec::new();
    let mut refused = Vec::new();
    for (k, s) in segs.into_iter().enumerate() {
        let Some(f) = s.fit else {
            refused.push(RefusedSegment {
                index: k + 1,
                label: s.label,
                start: s.start,
                end: s.end,
                reason: s.note.unwrap_or_else(|| "no fit".into()),
            });
            continue;
        };
        let (a, b) = s.idx;
        // Turning points from the samples the fit kept.
        let (ts, ys): (Vec<f64>, Vec<f64>) = (a..b)
            .filter(|i| s.rejected.binary_search(i).is_err())
            .map(|i| (t[i], y[i]))
            .unzip();
        let ext = turning::extremes(&ts, &ys, period0);
        let g = f.params[GAMMA];
        done.push(SegmentResult {
            index: k + 1,
            label: s.label,
            start: s.start,
            end: s.end,
            t_ref: f.t_mid,
            points: f.n,
            outliers: s.rejected.len(),
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
        });
    }
    (done, refused)
}

/// The longest stretch of `segments` with consecutive indices (the first of equal ones): a refused
/// segment between two others would put two equilibria of the same position side by side.
fn unbroken_run(segments: &[SegmentResult]) -> &[SegmentResult] {
    let mut best = (0, 0);
    let mut lo = 0;
    for k in 0..segments.len() {
        if k > 0 && segments[k].index != segments[k - 1].index + 1 {
            lo = k;
        }
        if k + 1 - lo > best.1 - best.0 {
            best = (lo, k + 1);
        }
    }
    &segments[best.0..best.1]
}

/// The deflection from the segments' equilibria, with remarks on how far it can be trusted.
pub fn combine_equilibria(
    segments: &[SegmentResult],
    refused: &[RefusedSegment],
    warnings: &mut Vec<String>,
) -> Result<Deflection, AnalysisError> {
    let run = unbroken_run(segments);
    if run.len() < segments.len() {
        warnings.push(format!(
            "a refused segment breaks the A-B alternation: the deflection uses segments {} to {} only (the longest unbroken run)",
            run[0].index,
            run[run.len() - 1].index
        ));
    }
    let eqs: Vec<(f64, Measured)> = run.iter().map(|s| (s.t_ref, s.equilibrium)).collect();
    let deflection = gravity::deflection(&eqs).ok_or_else(|| AnalysisError::TooFewEquilibria {
        reasons: refused
            .iter()
            .map(|r| format!("\n  {}", r.reason))
            .collect(),
    })?;
    if !deflection.triples {
        warnings.push(
            "only two segments: a drift of the zero is not cancelled (three or more segments let A-B-A triples cancel it)".into(),
        );
    }
    // Above 2 chance is an unlikely cause (two degrees of freedom, five segments: P = exp(-4) = 2 %);
    // between 1 and 2 the uncertainty is scaled without a remark.
    if let Some(b) = deflection.birge.filter(|b| *b > 2.0) {
        warnings.push(format!(
            "the equilibria wander between segments more than their fits allow (Birge ratio {b:.2} of the triples): the deflection's uncertainty is scaled up by that factor"
        ));
    }
    if !deflection.alternating {
        warnings.push("the equilibria do not alternate as expected for masses moved back and forth: check the events".into());
    }
    Ok(deflection)
}
