//! Rest point from the turning points (successive extremes) of a damped swing, as a cross-check on the
//! fitted equilibrium: each three successive extremes `x1, x2, x3` give `(x1 + 2 x2 + x3) / 4`, which
//! cancels the decay of the amplitude to first order (common practice, no source).
//!
//! Extremes are found as the largest (or smallest) sample within a quarter period either side, refined
//! by a parabola through the samples within a twelfth of a period; extremes closer than a twelfth of a
//! period to the segment's ends are not used (the trace may simply be cut there), nor are those whose
//! quarter-period neighbourhood holds a gap in the samples.

use crate::units::Measured;

/// One turning point: time (s) and angle (rad).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Extreme {
    pub t: f64,
    pub x: f64,
    pub is_max: bool,
}

/// Find the alternating extremes of `(t, y)` for an oscillation of period `period` (s).
pub fn extremes(t: &[f64], y: &[f64], period: f64) -> Vec<Extreme> {
    let n = t.len().min(y.len());
    if n < 5 || period.is_nan() || period <= 0.0 {
        return Vec::new();
    }
    let (q, edge) = (period / 4.0, period / 12.0);
    // Gaps (spacing over three times the median) make a window's extreme meaningless: count them so
    // windows that contain one are skipped.
    let mut d: Vec<f64> = t[..n].windows(2).map(|w| w[1] - w[0]).collect();
    d.sort_by(f64::total_cmp);
    let big = 3.0 * d[d.len() / 2];
    let mut gaps = vec![0usize; n];
    for k in 1..n {
        gaps[k] = gaps[k - 1] + usize::from(t[k] - t[k - 1] > big);
    }
    let mut out: Vec<Extreme> = Vec::new();
    let (mut lo, mut hi) = (0usize, 0usize);
    for i in 0..n {
        while t[lo] < t[i] - q {
            lo += 1;
        }
        while hi + 1 < n && t[hi + 1] <= t[i] + q {
            hi += 1;
        }
        if t[i] - t[0] < edge || t[n - 1] - t[i] < edge {
            continue;
        }
        if gaps[hi] > gaps[lo] || t[i] - t[lo] < q - big || t[hi] - t[i] < q - big {
            continue;
        }
        let win = &y[lo..=hi];
        let is_max = win.iter().all(|&v| v <= y[i]);
        let is_min = win.iter().all(|&v| v >= y[i]);
        if !(is_max || is_min) || (is_max && is_min) {
            continue;
        }
        if let Some(last) = out.last() {
            if last.is_max == is_max {
                continue;
            }
        }
        out.push(refine(t, y, i, edge, is_max));
    }
    out
}

/// Parabola through the samples within `h` of sample `i`.
fn refine(t: &[f64], y: &[f64], i: usize, h: f64, is_max: bool) -> Extreme {
    let (mut s, mut st, mut st2, mut st3, mut st4, mut sy, mut sty, mut st2y) =
        (0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0);
    for k in 0..t.len() {
        let d = t[k] - t[i];
        if d.abs() > h {
            continue;
        }
        s += 1.0;
        st += d;
        st2 += d * d;
        st3 += d * d * d;
        st4 += d * d * d * d;
        sy += y[k];
        sty += d * y[k];
        st2y += d * d * y[k];
    }
    let m = nalgebra::Matrix3::new(s, st, st2, st, st2, st3, st2, st3, st4);
    let r = nalgebra::Vector3::new(sy, sty, st2y);
    let fallback = Extreme {
        t: t[i],
        x: y[i],
        is_max,
    };
    match m.try_inverse().map(|inv| inv * r) {
        Some(c) if c[2] != 0.0 && (c[2] < 0.0) == is_max => {
            let dv = -c[1] / (2.0 * c[2]);
            if dv.abs() <= h {
                Extreme {
                    t: t[i] + dv,
                    x: c[0] + c[1] * dv + c[2] * dv * dv,
                    is_max,
                }
            } else {
                fallback
            }
        }
        _ => fallback,
    }
}

/// Mean rest point over all triples of successive extremes, with the standard deviation of the mean of
/// the (overlapping, hence correlated: an indicative figure) triple estimates. `None` below 4 extremes
/// (a single triple gives no scatter to judge it by).
pub fn rest_point(ext: &[Extreme]) -> Option<Measured> {
    if ext.len() < 4 {
        return None;
    }
    let r: Vec<f64> = ext
        .windows(3)
        .map(|w| (w[0].x + 2.0 * w[1].x + w[2].x) / 4.0)
        .collect();
    let n = r.len() as f64;
    let mean = r.iter().sum::<f64>() / n;
    let u = (r.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0) / n).sqrt();
    Some(Measured::new(mean, u))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rest_point_of_a_damped_cosine() {
        let t: Vec<f64> = (0..3000).map(|k| k as f64).collect();
        let w = 2.0 * std::f64::consts::PI / 500.0;
        let y: Vec<f64> = t
            .iter()
            .map(|&t| 2e-3 + 1e-3 * (-t / 3000.0f64).exp() * (w * t + 0.3).cos())
            .collect();
        let e = extremes(&t, &y, 500.0);
        assert!(e.len() >= 10, "{}", e.len());
        let r = rest_point(&e).unwrap();
        // First-order cancellation leaves a bias of order A (gamma T/2)^2 ~ 7e-3 A here.
        assert!((r.value - 2e-3).abs() < 2e-5, "{r}");
    }
}
