//! Subpixel position of one grid intersection: each of the two crossing lines is located at several
//! places between this intersection and its neighbours (darkness centroid of a profile taken along the
//! other line, so the other line only adds a constant), a straight line is fitted through those centres,
//! and the two fitted lines are intersected.

use super::Gray;

type P = (f64, f64);

/// Positions along a line (fractions of the step to the next intersection) where it is located.
const ALONG: [f64; 10] = [-0.7, -0.6, -0.5, -0.4, -0.3, 0.3, 0.4, 0.5, 0.6, 0.7];

/// Centre of the dark line crossed by the profile from q - across/2 to q + across/2, as a fraction of
/// `across` from q; None when the profile shows no line.
fn centre_on_profile(d: &Gray, q: P, across: P) -> Option<f64> {
    let len = (across.0 * across.0 + across.1 * across.1).sqrt();
    let n = ((len * 4.0).ceil() as usize).max(8);
    let mut c = 0.0;
    for _ in 0..4 {
        let mut sw = 0.0;
        let mut sws = 0.0;
        let s_at = |k: usize| c - 0.5 + k as f64 / n as f64;
        let val = |s: f64| d.bilinear(q.0 + s * across.0, q.1 + s * across.1);
        let base = 0.5 * (val(s_at(0))? + val(s_at(n))?);
        for k in 0..=n {
            let s = s_at(k);
            let w = (val(s)? - base).max(0.0);
            // Trapezoid weights at the ends.
            let w = if k == 0 || k == n { 0.5 * w } else { w };
            sw += w;
            sws += w * s;
        }
        if sw.is_nan() || sw <= 0.0 {
            return None;
        }
        let next = sws / sw;
        if (next - c).abs() < 1e-4 {
            c = next;
            break;
        }
        c = next;
        if c.abs() > 0.5 {
            return None;
        }
    }
    Some(c)
}

/// Total-least-squares line through points: (centroid, unit direction).
fn fit_line(pts: &[P]) -> Option<(P, P)> {
    if pts.len() < 3 {
        return None;
    }
    let n = pts.len() as f64;
    let (cx, cy) = pts
        .iter()
        .fold((0.0, 0.0), |a, p| (a.0 + p.0 / n, a.1 + p.1 / n));
    let (mut sxx, mut sxy, mut syy) = (0.0, 0.0, 0.0);
    for p in pts {
        sxx += (p.0 - cx).powi(2);
        sxy += (p.0 - cx) * (p.1 - cy);
        syy += (p.1 - cy).powi(2);
    }
    let angle = 0.5 * (2.0 * sxy).atan2(sxx - syy);
    Some(((cx, cy), (angle.cos(), angle.sin())))
}

fn intersect(a: (P, P), b: (P, P)) -> Option<P> {
    let ((p, d), (q, e)) = (a, b);
    let den = d.0 * e.1 - d.1 * e.0;
    if den.abs() < 1e-6 {
        return None;
    }
    let t = ((q.0 - p.0) * e.1 - (q.1 - p.1) * e.0) / den;
    Some((p.0 + t * d.0, p.1 + t * d.1))
}

/// Points on the line through `c` running along `along`, each found on a profile along `across`.
fn line_points(d: &Gray, c: P, along: P, across: P) -> Vec<P> {
    ALONG
        .iter()
        .filter_map(|&t| {
            let q = (c.0 + t * along.0, c.1 + t * along.1);
            centre_on_profile(d, q, across).map(|s| (q.0 + s * across.0, q.1 + s * across.1))
        })
        .collect()
}

/// Refine the intersection near `c` whose steps to the neighbouring intersections are about `u` and `v`.
pub fn intersection(d: &Gray, c: P, u: P, v: P) -> Option<P> {
    let mut c = c;
    for _ in 0..3 {
        let lu = fit_line(&line_points(d, c, u, v))?;
        let lv = fit_line(&line_points(d, c, v, u))?;
        let next = intersect(lu, lv)?;
        let moved = ((next.0 - c.0).powi(2) + (next.1 - c.1).powi(2)).sqrt();
        c = next;
        if moved < 1e-3 {
            break;
        }
    }
    Some(c)
}
