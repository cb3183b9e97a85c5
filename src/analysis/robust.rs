//! Residual-based outlier rejection for the segment fits: a sample whose residual from the fit lies
//! more than five robust standard deviations away is left out and the fit made again, until the set of
//! samples left out no longer changes. The standard deviation is `1.4826 x` the median absolute
//! residual (the normal distribution's consistency factor), so the stray points themselves do not
//! inflate it; for Gaussian noise a 5-sigma clip leaves out a genuine sample with probability
//! 5.7e-7, so a segment of a few thousand samples loses none.

/// Clip at this many robust standard deviations.
pub const CLIP_SIGMAS: f64 = 5.0;
/// At most this many fit-and-clip rounds.
const ROUNDS: usize = 8;

/// Fit `(ts, ys)` with `fit`, leaving out samples whose residual (`eval` gives the model) exceeds
/// [`CLIP_SIGMAS`] robust standard deviations. Returns the last fit and the indices (into `ts`) left
/// out. A fit error on a clipped subset returns the last good fit.
pub fn clip_fit<F, E>(
    ts: &[f64],
    ys: &[f64],
    fit: impl Fn(&[f64], &[f64]) -> Result<F, E>,
    eval: impl Fn(&F, f64) -> f64,
) -> Result<(F, Vec<usize>), E> {
    let mut best = fit(ts, ys)?;
    let mut out: Vec<usize> = Vec::new();
    // Below this the residuals are rounding, not noise (a noise-free trace).
    let scale = ys.iter().fold(0.0f64, |a, &v| a.max(v.abs()));
    let floor = 1e-9 * scale;
    for _ in 0..ROUNDS {
        let r: Vec<f64> = ts
            .iter()
            .zip(ys)
            .map(|(&t, &y)| y - eval(&best, t))
            .collect();
        let mut abs: Vec<f64> = r.iter().map(|v| v.abs()).collect();
        abs.sort_by(f64::total_cmp);
        let sigma = 1.4826 * abs[abs.len() / 2];
        let limit = (CLIP_SIGMAS * sigma).max(floor);
        let now: Vec<usize> = (0..r.len()).filter(|&k| r[k].abs() > limit).collect();
        if now == out || now.len() * 4 > ts.len() {
            break;
        }
        let (kt, ky): (Vec<f64>, Vec<f64>) = (0..ts.len())
            .filter(|k| now.binary_search(k).is_err())
            .map(|k| (ts[k], ys[k]))
            .unzip();
        match fit(&kt, &ky) {
            Ok(f) => {
                best = f;
                out = now;
            }
            Err(_) => break,
        }
    }
    Ok((best, out))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A straight-line fit by least squares, written here so the clip is tested on its own.
    fn line(ts: &[f64], ys: &[f64]) -> Result<(f64, f64), ()> {
        let n = ts.len() as f64;
        let (mt, my) = (ts.iter().sum::<f64>() / n, ys.iter().sum::<f64>() / n);
        let sxx: f64 = ts.iter().map(|t| (t - mt).powi(2)).sum();
        let sxy: f64 = ts.iter().zip(ys).map(|(t, y)| (t - mt) * (y - my)).sum();
        if sxx == 0.0 {
            return Err(());
        }
        let b = sxy / sxx;
        Ok((my - b * mt, b))
    }

    #[test]
    fn stray_points_are_left_out_and_counted() {
        let ts: Vec<f64> = (0..200).map(f64::from).collect();
        // Deterministic noise of standard deviation about 0.01 (a sum of incommensurate sines).
        let mut ys: Vec<f64> = ts
            .iter()
            .map(|&t| 2.0 + 0.5 * t + 0.01 * ((t * 1.7).sin() + (t * 2.9).cos()))
            .collect();
        for &k in &[13usize, 77, 150] {
            ys[k] += 40.0;
        }
        let (f, out) = clip_fit(&ts, &ys, line, |f, t| f.0 + f.1 * t).unwrap();
        assert_eq!(out, vec![13, 77, 150]);
        assert!((f.1 - 0.5).abs() < 1e-3, "slope {}", f.1);
    }
}
