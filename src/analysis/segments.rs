//! Mass moves found in the trace (when no events file is given), and the refinement of a move's time
//! from the data (for found and logged moves alike).
//!
//! Finding the moves uses the equation of motion: with the torque constant between moves,
//! `theta_eq(t) = theta + (theta'' + 2 gamma theta') / omega_0^2` is constant, so it is a step function
//! over the run whose steps are the moves. The derivatives come from a local quadratic fit over a fifth
//! of a period (at least five samples' span) around each point of a grid (a hundredth of a period apart, using only the samples
//! present, so gaps are not bridged); the step detector is the difference between the means of
//! `theta_eq` over one period after and one period before each grid point, whose extremes (above eight
//! times the detector's noise, estimated robustly from differences of `theta_eq`, and above a quarter
//! of the largest step) are the moves. A full
//! period in each window cancels the ripple the quadratic's bias leaves at the oscillation frequency.
//! Moves closer than one period to the ends of the trace, or to each other, are not found.
//! [`refine_move`] then sharpens each time with the exact step response of the oscillator.

/// The step detector's output, kept for the report.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Detection {
    /// Times of the moves found, s.
    pub moves: Vec<f64>,
    /// Detector grid times, s.
    pub grid_t: Vec<f64>,
    /// Detector value (after-minus-before mean equilibrium), rad.
    pub step: Vec<f64>,
    /// Robust noise of the detector, rad.
    pub noise: f64,
}

/// Local quadratic fit of the samples within `h` of `tc` (indices from `lo`, advanced by the caller).
/// Returns (value, first derivative, second derivative) at `tc`.
fn local_quadratic(t: &[f64], y: &[f64], tc: f64, h: f64, lo: usize) -> Option<(f64, f64, f64)> {
    let mut m = nalgebra::Matrix3::<f64>::zeros();
    let mut r = nalgebra::Vector3::<f64>::zeros();
    let mut count = 0;
    for k in lo..t.len() {
        let d = t[k] - tc;
        if d > h {
            break;
        }
        if d < -h {
            continue;
        }
        let v = nalgebra::Vector3::new(1.0, d / h, (d / h) * (d / h));
        m += v * v.transpose();
        r += v * y[k];
        count += 1;
    }
    if count < 5 {
        return None;
    }
    let c = m.try_inverse()? * r;
    Some((c[0], c[1] / h, 2.0 * c[2] / (h * h)))
}

/// Find the mass moves in `(t, y)` for an oscillation of natural period `period` (s) and decay rate
/// `gamma` (1/s).
pub fn detect_moves(t: &[f64], y: &[f64], period: f64, gamma: f64) -> Detection {
    let empty = Detection {
        moves: Vec::new(),
        grid_t: Vec::new(),
        step: Vec::new(),
        noise: 0.0,
    };
    let n = t.len().min(y.len());
    if n < 10 || period.is_nan() || period <= 0.0 {
        return empty;
    }
    let dg = period / 100.0;
    let eq = equilibrium_grid(t, y, period, gamma, dg);
    let (grid_t, step) = step_detector(&eq, t[0], dg);
    if step.is_empty() {
        return empty;
    }
    let Some(noise) = detector_noise(&eq) else {
        return empty;
    };
    let largest = step.iter().fold(0.0f64, |a, b| a.max(b.abs()));
    let threshold = (8.0 * noise).max(0.25 * largest);
    let moves = pick_moves(&grid_t, &step, threshold, dg, period);
    Detection {
        moves,
        grid_t,
        step,
        noise,
    }
}

/// The instantaneous equilibrium `theta + (theta'' + 2 gamma theta') / omega_0^2` on a grid `dg` s
/// apart from `t[0]` to the last sample, from local quadratics over a fifth of a period (`None` where
/// too few samples are near).
fn equilibrium_grid(t: &[f64], y: &[f64], period: f64, gamma: f64, dg: f64) -> Vec<Option<f64>> {
    let n = t.len().min(y.len());
    let w0 = 2.0 * std::f64::consts::PI / period;
    // A fifth of a period, or wide enough for five samples when the sampling is sparse (the
    // quadratic's larger bias is a ripple at the oscillation frequency, which the detector's
    // one-period windows cancel).
    let h = (period / 10.0).max(2.6 * median_spacing(t));
    let (ta, tb) = (t[0], t[n - 1]);
    let m = ((tb - ta) / dg).floor() as usize + 1;
    let mut eq: Vec<Option<f64>> = Vec::with_capacity(m);
    let mut lo = 0;
    for k in 0..m {
        let tc = ta + k as f64 * dg;
        while lo < n && t[lo] < tc - h {
            lo += 1;
        }
        eq.push(
            local_quadratic(t, y, tc, h, lo)
                .map(|(v, d1, d2)| v + (d2 + 2.0 * gamma * d1) / (w0 * w0)),
        );
    }
    eq
}

/// Median spacing of the sample times, s.
fn median_spacing(t: &[f64]) -> f64 {
    let mut d: Vec<f64> = t.windows(2).map(|w| w[1] - w[0]).collect();
    d.sort_by(f64::total_cmp);
    d[d.len() / 2]
}

/// The detector on the grid (first point at `ta`, spacing `dg`): the mean equilibrium over one
/// period after each grid point minus that over one period before, where at least half of each
/// window's points are present. Returns the detector's times and values.
fn step_detector(eq: &[Option<f64>], ta: f64, dg: f64) -> (Vec<f64>, Vec<f64>) {
    let m = eq.len();
    // Prefix sums over present grid points for window means.
    let mut cs = vec![0.0; m + 1];
    let mut cc = vec![0usize; m + 1];
    for k in 0..m {
        cs[k + 1] = cs[k] + eq[k].unwrap_or(0.0);
        cc[k + 1] = cc[k] + usize::from(eq[k].is_some());
    }
    let wn = 100usize; // one period of grid points
    let mut grid_t = Vec::new();
    let mut step = Vec::new();
    for k in wn..m.saturating_sub(wn) {
        let (nb, na) = (cc[k] - cc[k - wn], cc[k + wn] - cc[k]);
        if nb < wn / 2 || na < wn / 2 {
            continue;
        }
        let before = (cs[k] - cs[k - wn]) / nb as f64;
        let after = (cs[k + wn] - cs[k]) / na as f64;
        grid_t.push(ta + k as f64 * dg);
        step.push(after - before);
    }
    (grid_t, step)
}

/// Noise of the detector: the equilibrium's scatter from differences two smoothing widths apart
/// (the steps touch only a few of them), reduced by the about five independent values per window.
/// `None` when no such difference exists.
fn detector_noise(eq: &[Option<f64>]) -> Option<f64> {
    let m = eq.len();
    let lag = 20;
    let mut diffs: Vec<f64> = (lag..m)
        .filter_map(|k| Some((eq[k]? - eq[k - lag]?).abs()))
        .collect();
    if diffs.is_empty() {
        return None;
    }
    diffs.sort_by(f64::total_cmp);
    let sigma_eq = 1.4826 * diffs[diffs.len() / 2] / std::f64::consts::SQRT_2;
    Some(sigma_eq * (2.0f64 / 5.0).sqrt())
}

/// The moves: the extreme of each excursion of the detector above `threshold` (one sign at a time),
/// interpolated by a parabola between grid points `dg` s apart; a move within `period` s of the one
/// before is dropped.
fn pick_moves(grid_t: &[f64], step: &[f64], threshold: f64, dg: f64, period: f64) -> Vec<f64> {
    let mut moves = Vec::new();
    let mut k = 0;
    while k < step.len() {
        if step[k].abs() <= threshold {
            k += 1;
            continue;
        }
        // The excursion above threshold: its extreme is the move.
        let start = k;
        while k < step.len()
            && step[k].abs() > threshold
            && step[k].signum() == step[start].signum()
        {
            k += 1;
        }
        let (kb, _) = (start..k).fold((start, 0.0), |(bk, bv), j| {
            if step[j].abs() > bv {
                (j, step[j].abs())
            } else {
                (bk, bv)
            }
        });
        let mut tm = grid_t[kb];
        if kb > 0 && kb + 1 < step.len() {
            let (a, b, c) = (step[kb - 1].abs(), step[kb].abs(), step[kb + 1].abs());
            let den = a - 2.0 * b + c;
            if den < 0.0 {
                tm += (0.5 * (a - c) / den).clamp(-0.5, 0.5) * dg;
            }
        }
        if moves.last().is_none_or(|&p: &f64| tm - p >= period) {
            moves.push(tm);
        }
    }
    moves
}

/// Refine a move's time near `guess` using the samples in `[lo, hi]` (kept within one period of it):
/// the trace there is fitted as a free oscillation plus the exact response to a torque step at `t_m`,
/// `Delta (1 - e^(-gamma s) (cos omega_d s + (gamma / omega_d) sin omega_d s))`, `s = t - t_m`, all
/// amplitudes linear; `t_m` is scanned over `reach` periods either side of `guess` (in steps of a
/// 400th of a period) and the lowest residual is refined by a parabola. `None` when there are too few
/// samples, or when the lowest residual lies at the end of the scan (the step is not in reach).
#[allow(clippy::too_many_arguments)]
pub fn refine_move(
    t: &[f64],
    y: &[f64],
    guess: f64,
    lo: f64,
    hi: f64,
    gamma: f64,
    omega_d: f64,
    reach: f64,
) -> Option<f64> {
    if omega_d.is_nan() || omega_d <= 0.0 {
        return None;
    }
    let period = 2.0 * std::f64::consts::PI / omega_d;
    let (lo, hi) = (lo.max(guess - period), hi.min(guess + period));
    let a = t.partition_point(|&v| v < lo);
    let b = t.partition_point(|&v| v <= hi);
    if b < a + 12 {
        return None;
    }
    let (ts, ys) = (&t[a..b], &y[a..b]);
    let ym = ys.iter().sum::<f64>() / ys.len() as f64;
    let rss_at = |tm: f64| step_rss(ts, ys, ym, lo, tm, gamma, omega_d);
    let step = period / 400.0;
    let half = (reach * 400.0).round().max(1.0) as i64;
    let cand: Vec<(f64, f64)> = (-half..=half)
        .map(|k| guess + k as f64 * step)
        .filter(|&tm| tm > ts[0] && tm < ts[ts.len() - 1])
        .filter_map(|tm| rss_at(tm).map(|r| (tm, r)))
        .collect();
    if cand.len() < 3 {
        return None;
    }
    let (kb, _) = cand
        .iter()
        .enumerate()
        .fold((0, f64::INFINITY), |(bk, bv), (k, c)| {
            if c.1 < bv {
                (k, c.1)
            } else {
                (bk, bv)
            }
        });
    if kb == 0 || kb + 1 == cand.len() {
        return None;
    }
    let mut tm = cand[kb].0;
    if kb > 0 && kb + 1 < cand.len() {
        let (r0, r1, r2) = (cand[kb - 1].1, cand[kb].1, cand[kb + 1].1);
        let den = r0 - 2.0 * r1 + r2;
        if den > 0.0 {
            tm += (0.5 * (r0 - r2) / den).clamp(-1.0, 1.0) * step;
        }
    }
    Some(tm)
}

/// Residual sum of squares of `(ts, ys - ym)` against a free oscillation (origin `lo`) plus the exact
/// response to a torque step at `tm`, all amplitudes linear.
fn step_rss(
    ts: &[f64],
    ys: &[f64],
    ym: f64,
    lo: f64,
    tm: f64,
    gamma: f64,
    omega_d: f64,
) -> Option<f64> {
    let mut m = nalgebra::Matrix4::<f64>::zeros();
    let mut r = nalgebra::Vector4::<f64>::zeros();
    let rows: Vec<nalgebra::Vector4<f64>> = ts
        .iter()
        .map(|&tt| {
            let e = (-gamma * (tt - lo)).exp();
            let (sn, cs) = (omega_d * (tt - lo)).sin_cos();
            let s = tt - tm;
            let step = if s >= 0.0 {
                let (ss, cc) = (omega_d * s).sin_cos();
                1.0 - (-gamma * s).exp() * (cc + gamma / omega_d * ss)
            } else {
                0.0
            };
            nalgebra::Vector4::new(1.0, e * cs, e * sn, step)
        })
        .collect();
    for (v, &yy) in rows.iter().zip(ys) {
        m += v * v.transpose();
        r += v * (yy - ym);
    }
    let c = m.try_inverse()? * r;
    Some(
        rows.iter()
            .zip(ys)
            .map(|(v, &yy)| (v.dot(&c) - (yy - ym)).powi(2))
            .sum(),
    )
}
