//! The covariance of a least-squares fit whose residuals are correlated in time (air currents, a
//! creeping fibre, a sluggish camera), not white as the textbook `(J^T J)^-1 s^2` assumes.
//!
//! The residuals are modelled as first-order autoregressive noise, `e_i = phi e_(i-1) + w_i`, whose
//! correlation matrix is `R_ij = phi^|i-j|`. The fit itself takes up part of the noise's slow
//! wandering (a level, a drift and a slow oscillation are free to follow it), so the residuals'
//! lag-one autocorrelation `r_1 = r^T D r / r^T r` (`D` half the sum of the one-step shifts) is below
//! `phi`. `phi` is the value whose residuals would show `r_1` on average: with `M = I - H` the
//! residual maker, `E[r^T D r] / E[r^T r] = tr(D M R M) / tr(M R)`, solved by bisection (the
//! ratio of expectations, common practice, no source; for a mean alone it reproduces the known bias
//! of `r_1`, about `-(1 + 3 phi) / n`). The ordinary least-squares estimate is kept; its covariance
//! under that noise is the sandwich
//! `s^2 (J^T J)^-1 J^T R J (J^T J)^-1`, with the noise variance estimated without bias for the
//! fitted model, `s^2 = RSS / tr((I - H) R)`, `H = J (J^T J)^-1 J^T` (the expectation of the
//! residual sum of squares of a linear model with correlated errors; for `phi = 0` this is the usual
//! `RSS / (n - p)`). `R x` is computed by a forward and a backward recursion, so the cost grows with
//! `n`, not `n^2`. Each parameter gets its own widening: a level by the noise's low-frequency power, a
//! frequency by the power near the oscillation.
//!
//! Lags are counted in samples, so the samples are taken as evenly spaced (true of a camera's frames
//! and of readings at a fixed interval; a few lost frames shift the lags a little).

use nalgebra::{DMatrix, DVector};

/// The largest `phi` used: beyond it the noise is a random walk for the length of any segment and
/// the fit's `R` is as good as all ones.
const PHI_MAX: f64 = 0.999;

/// What the residuals' correlation did to a fit's covariance.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct NoiseCorrelation {
    /// The noise's lag-one correlation `phi` found from the residuals (0 when they look white).
    pub lag1: f64,
    /// The noise's integrated autocorrelation time `(1 + phi) / (1 - phi)`, samples (1 for white).
    pub tau_samples: f64,
}

impl NoiseCorrelation {
    /// White noise: nothing to widen.
    pub const WHITE: NoiseCorrelation = NoiseCorrelation {
        lag1: 0.0,
        tau_samples: 1.0,
    };

    fn of(phi: f64) -> Self {
        Self {
            lag1: phi,
            tau_samples: (1.0 + phi) / (1.0 - phi),
        }
    }
}

/// The residuals' own lag-one autocorrelation `r_1` (0 for too few or zero residuals).
pub fn lag_one(r: &[f64]) -> f64 {
    let c0: f64 = r.iter().map(|v| v * v).sum();
    if r.len() < 8 || c0 <= 0.0 || !c0.is_finite() {
        return 0.0;
    }
    r.windows(2).map(|w| w[0] * w[1]).sum::<f64>() / c0
}

/// `J`'s columns each multiplied by `R` for `phi`.
fn correlated(j: &DMatrix<f64>, phi: f64) -> DMatrix<f64> {
    let mut out = j.clone();
    for mut col in out.column_iter_mut() {
        let v = correlate(col.as_slice(), phi);
        col.copy_from_slice(&v);
    }
    out
}

/// `D J`: each column replaced by the mean of its neighbours (`D` half the sum of the one-step
/// shifts, zero beyond the ends).
fn shifted(j: &DMatrix<f64>) -> DMatrix<f64> {
    let n = j.nrows();
    DMatrix::from_fn(n, j.ncols(), |i, c| {
        let before = if i > 0 { j[(i - 1, c)] } else { 0.0 };
        let after = if i + 1 < n { j[(i + 1, c)] } else { 0.0 };
        0.5 * (before + after)
    })
}

/// The lag-one autocorrelation the residuals of a fit with Jacobian `j` would show on average under
/// AR(1) noise of `phi`: `tr(D M R M) / tr(M R)`, expanded so that only p x p matrices are formed
/// (`dj = D J`).
fn expected_lag_one(j: &DMatrix<f64>, inv: &DMatrix<f64>, dj: &DMatrix<f64>, phi: f64) -> f64 {
    let n = j.nrows() as f64;
    let rj = correlated(j, phi);
    let jrj = j.transpose() * &rj;
    let jdj = j.transpose() * dj;
    let jrdj = rj.transpose() * dj;
    let m_r = n - (inv * &jrj).trace();
    let d_r = (n - 1.0) * phi;
    let dmrm = d_r - 2.0 * (inv * &jrdj).trace() + (inv * &jrj * inv * &jdj).trace();
    dmrm / m_r
}

/// The AR(1) `phi` whose fit residuals would show the lag-one autocorrelation `r1` on average, in
/// `[0, PHI_MAX]` (0 when even white noise would show more).
fn solve_phi(j: &DMatrix<f64>, inv: &DMatrix<f64>, r1: f64) -> f64 {
    let dj = shifted(j);
    let at = |phi: f64| expected_lag_one(j, inv, &dj, phi);
    if r1.is_nan() || r1 <= at(0.0) {
        return 0.0;
    }
    if r1 >= at(PHI_MAX) {
        return PHI_MAX;
    }
    let (mut lo, mut hi) = (0.0, PHI_MAX);
    for _ in 0..40 {
        let mid = 0.5 * (lo + hi);
        if at(mid) < r1 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// `R x` for `R_ij = phi^|i-j|`.
fn correlate(x: &[f64], phi: f64) -> Vec<f64> {
    let n = x.len();
    let mut fwd = vec![0.0; n];
    let mut acc = 0.0;
    for i in 0..n {
        acc = x[i] + phi * acc;
        fwd[i] = acc;
    }
    acc = 0.0;
    for i in (0..n).rev() {
        acc = x[i] + phi * acc;
        fwd[i] += acc - x[i];
    }
    fwd
}

/// The parameters' covariance for Jacobian `j` (n x p), residuals `r` and `inv = (J^T J)^-1`, and
/// the correlation it allowed for. White-looking residuals give the usual `inv RSS / (n - p)`.
pub fn covariance(
    j: &DMatrix<f64>,
    r: &DVector<f64>,
    inv: &DMatrix<f64>,
) -> (DMatrix<f64>, NoiseCorrelation) {
    let (n, p) = j.shape();
    let rss = r.norm_squared();
    let white = || (inv * (rss / (n - p) as f64), NoiseCorrelation::WHITE);
    if n < 8 {
        return white();
    }
    let phi = solve_phi(j, inv, lag_one(r.as_slice()));
    if phi <= 0.0 {
        return white();
    }
    let spread = inv * (j.transpose() * correlated(j, phi));
    // tr((I - H) R) = tr(R) - tr((J^T J)^-1 J^T R J), and tr(R) = n.
    let dof = n as f64 - spread.trace();
    if dof.is_nan() || dof <= 0.0 {
        return white();
    }
    let cov = spread * inv * (rss / dof);
    (cov, NoiseCorrelation::of(phi))
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::rngs::StdRng;
    use rand::SeedableRng;
    use rand_distr::{Distribution, StandardNormal};

    fn ar1(n: usize, phi: f64, rng: &mut StdRng) -> Vec<f64> {
        let mut x: f64 = StandardNormal.sample(rng);
        (0..n)
            .map(|_| {
                let v = x;
                let z: f64 = StandardNormal.sample(rng);
                x = phi * x + (1.0 - phi * phi).sqrt() * z;
                v
            })
            .collect()
    }

    #[test]
    fn correlate_matches_the_matrix() {
        let x = [1.0, -2.0, 0.5, 3.0, 0.0, 1.5];
        let phi = 0.7_f64;
        let got = correlate(&x, phi);
        for (i, g) in got.iter().enumerate() {
            let want: f64 = (0..x.len())
                .map(|k| phi.powi((i as i32 - k as i32).abs()) * x[k])
                .sum();
            assert!((g - want).abs() < 1e-12, "{i}: {g} vs {want}");
        }
    }

    /// The variance of a mean of `n` AR(1) samples is
    /// `sigma^2 / n^2 sum_(i,j) phi^|i-j|` (common practice, no source); averaged over many series the
    /// estimate comes within a few percent of it, the white-noise estimate far below.
    #[test]
    fn the_mean_of_ar1_noise_gets_its_variance() {
        let (n, phi, series) = (300, 0.9_f64, 400);
        let mut rng = StdRng::seed_from_u64(7);
        let j = DMatrix::from_element(n, 1, 1.0);
        let inv = DMatrix::from_element(1, 1, 1.0 / n as f64);
        let ones = vec![1.0; n];
        let truth = correlate(&ones, phi).iter().sum::<f64>() / (n * n) as f64;
        let (mut var_sum, mut white_sum, mut sq_err) = (0.0, 0.0, 0.0);
        for _ in 0..series {
            let e = ar1(n, phi, &mut rng);
            let mean = e.iter().sum::<f64>() / n as f64;
            let r = DVector::from_iterator(n, e.iter().map(|v| v - mean));
            let (cov, _) = covariance(&j, &r, &inv);
            var_sum += cov[(0, 0)];
            white_sum += r.norm_squared() / (n - 1) as f64 / n as f64;
            sq_err += mean * mean;
        }
        let ours = var_sum / series as f64 / truth;
        let white = white_sum / series as f64 / truth;
        let seen = sq_err / series as f64 / truth;
        assert!((seen - 1.0).abs() < 0.15, "simulated/true variance {seen}");
        assert!((ours - 1.0).abs() < 0.15, "estimated/true variance {ours}");
        assert!(white < 0.2, "white-noise estimate/true variance {white}");
    }

    #[test]
    fn white_residuals_keep_the_textbook_covariance() {
        let n = 4000;
        let mut rng = StdRng::seed_from_u64(3);
        let r = DVector::from_iterator(n, (0..n).map(|_| StandardNormal.sample(&mut rng)));
        let phi = lag_one(r.as_slice());
        assert!(phi.abs() < 0.05, "{phi}");
        let j = DMatrix::from_element(n, 1, 1.0);
        let inv = DMatrix::from_element(1, 1, 1.0 / n as f64);
        let (cov, _) = covariance(&j, &r, &inv);
        let white = r.norm_squared() / (n - 1) as f64 / n as f64;
        assert!((cov[(0, 0)] / white - 1.0).abs() < 0.15);
    }
}
