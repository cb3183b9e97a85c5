//! Least-squares fit of a damped sinusoid with a linear drift to one segment:
//! `x(t) = x_eq + e^(-gamma s) (a cos(omega_d s) + b sin(omega_d s)) + c (t - t_mid)`, `s = t - t_0`,
//! where `t_0` is the segment's start (the transient's origin) and `t_mid` its midpoint (where `x_eq`
//! is the equilibrium, least correlated with the drift `c`). Amplitude and phase are
//! `A = hypot(a, b)`, `phi = atan2(-b, a)`.
//!
//! The nonlinear fit is Levenberg–Marquardt (levenberg-marquardt crate, MINPACK's algorithm) started
//! from the best point of a small grid in `(omega_d, gamma)` around the spectrum's frequency, where the
//! remaining parameters are linear and solved exactly. The parameter covariance is
//! `(J^T J)^-1 s^2` with `s^2 = RSS / (n - p)` (the usual estimate for unknown white noise) when the
//! residuals look white, else the sandwich estimate for correlated residuals of [`super::ar1`].
//! Internally time is scaled by the segment's length and the angle by its spread, so the solver sees
//! numbers of order one.

use super::ar1::{self, NoiseCorrelation};
use levenberg_marquardt::{LeastSquaresProblem, LevenbergMarquardt};
use nalgebra::{storage::Owned, DMatrix, DVector, Dyn};

/// Index of each parameter in [`DampedFit::params`] and [`DampedFit::cov`].
pub const X_EQ: usize = 0;
pub const A_COS: usize = 1;
pub const B_SIN: usize = 2;
pub const GAMMA: usize = 3;
pub const OMEGA: usize = 4;
pub const DRIFT: usize = 5;

/// A fitted segment. Parameters are SI: rad, rad, rad, 1/s, rad/s, rad/s.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct DampedFit {
    /// `[x_eq, a, b, gamma, omega_d, c]`; `c` is zero (and fixed) when the drift is not fitted.
    pub params: [f64; 6],
    /// Covariance of the parameters (rows/columns of fixed parameters are zero).
    pub cov: [[f64; 6]; 6],
    /// Transient origin `t_0`, s.
    pub t0: f64,
    /// Drift reference `t_mid`, s.
    pub t_mid: f64,
    /// Number of samples fitted.
    pub n: usize,
    /// Number of free parameters.
    pub n_free: usize,
    /// Root-mean-square residual, rad.
    pub rms: f64,
    /// Whether `gamma` and `omega_d` were held fixed (linear fit only).
    pub frequency_fixed: bool,
    /// How correlated the residuals were, and so how far the covariance was widened.
    pub noise: NoiseCorrelation,
    /// The textbook white-noise covariance `(J^T J)^-1 RSS / (n - p)`, the one general least-squares
    /// programs report; equal to `cov` when the residuals look white.
    pub white_cov: [[f64; 6]; 6],
}

impl DampedFit {
    /// Model value at `t`.
    pub fn eval(&self, t: f64) -> f64 {
        model(&self.params, self.t0, self.t_mid, t)
    }
    /// Second time derivative of the model at `t`, rad/s^2.
    pub fn acceleration(&self, t: f64) -> f64 {
        let p = &self.params;
        let (g, w) = (p[GAMMA], p[OMEGA]);
        let s = t - self.t0;
        let e = (-g * s).exp();
        let (sn, cs) = (w * s).sin_cos();
        // d2/ds2 of e^{-gs}(a cos ws + b sin ws).
        let a2 = (g * g - w * w) * p[A_COS] - 2.0 * g * w * p[B_SIN];
        let b2 = (g * g - w * w) * p[B_SIN] + 2.0 * g * w * p[A_COS];
        e * (a2 * cs + b2 * sn)
    }
    /// Gradient of [`DampedFit::acceleration`] at `t` with respect to the parameters.
    pub fn acceleration_gradient(&self, t: f64) -> [f64; 6] {
        let mut g = [0.0; 6];
        for (k, gk) in g.iter_mut().enumerate() {
            let h = 1e-6 * self.params[k].abs().max(1e-12);
            let mut up = self.clone();
            up.params[k] += h;
            let mut dn = self.clone();
            dn.params[k] -= h;
            *gk = (up.acceleration(t) - dn.acceleration(t)) / (2.0 * h);
        }
        g
    }
    /// Standard uncertainty of parameter `k`.
    pub fn u(&self, k: usize) -> f64 {
        self.cov[k][k].max(0.0).sqrt()
    }
    /// Natural angular frequency `omega_0 = sqrt(omega_d^2 + gamma^2)` and its standard uncertainty.
    pub fn omega0(&self) -> (f64, f64) {
        let (g, w) = (self.params[GAMMA], self.params[OMEGA]);
        let w0 = (w * w + g * g).sqrt();
        let (dg, dw) = (g / w0, w / w0);
        let var = dw * dw * self.cov[OMEGA][OMEGA]
            + dg * dg * self.cov[GAMMA][GAMMA]
            + 2.0 * dw * dg * self.cov[OMEGA][GAMMA];
        (w0, var.max(0.0).sqrt())
    }
    /// Amplitude at the segment's start, rad.
    pub fn amplitude(&self) -> f64 {
        self.params[A_COS].hypot(self.params[B_SIN])
    }
}

/// Model value for SI parameters.
pub fn model(p: &[f64; 6], t0: f64, t_mid: f64, t: f64) -> f64 {
    let s = t - t0;
    let (sn, cs) = (p[OMEGA] * s).sin_cos();
    p[X_EQ] + (-p[GAMMA] * s).exp() * (p[A_COS] * cs + p[B_SIN] * sn) + p[DRIFT] * (t - t_mid)
}

/// Why a fit failed.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum FitError {
    #[error("{n} samples are too few for {p} parameters")]
    TooFew { n: usize, p: usize },
    #[error("the fit did not converge ({0})")]
    NoConvergence(String),
    #[error("the fit's normal matrix is singular: the samples do not determine the parameters")]
    Singular,
}

/// Scaled problem: u = (t - t0)/span, z = (y - ym)/ys; params
/// [e, a, b, g, w, c] with x = e + exp(-g u)(a cos wu + b sin wu) + c (u - um).
struct Problem<'a> {
    u: &'a [f64],
    z: &'a [f64],
    um: f64,
    drift: bool,
    p: DVector<f64>,
}

impl Problem<'_> {
    fn full(&self) -> [f64; 6] {
        let mut q = [0.0; 6];
        for (k, v) in self.p.iter().enumerate() {
            q[k] = *v;
        }
        q
    }
    fn jac(&self) -> DMatrix<f64> {
        let q = self.full();
        let np = self.p.len();
        let mut j = DMatrix::zeros(self.u.len(), np);
        for (i, &u) in self.u.iter().enumerate() {
            let e = (-q[3] * u).exp();
            let (sn, cs) = (q[4] * u).sin_cos();
            j[(i, 0)] = 1.0;
            j[(i, 1)] = e * cs;
            j[(i, 2)] = e * sn;
            j[(i, 3)] = -u * e * (q[1] * cs + q[2] * sn);
            j[(i, 4)] = u * e * (-q[1] * sn + q[2] * cs);
            if self.drift {
                j[(i, 5)] = u - self.um;
            }
        }
        j
    }
}

impl LeastSquaresProblem<f64, Dyn, Dyn> for Problem<'_> {
    type ResidualStorage = Owned<f64, Dyn>;
    type JacobianStorage = Owned<f64, Dyn, Dyn>;
    type ParameterStorage = Owned<f64, Dyn>;

    fn set_params(&mut self, x: &DVector<f64>) {
        self.p.copy_from(x);
    }
    fn params(&self) -> DVector<f64> {
        self.p.clone()
    }
    fn residuals(&self) -> Option<DVector<f64>> {
        let q = self.full();
        Some(DVector::from_iterator(
            self.u.len(),
            self.u
                .iter()
                .zip(self.z)
                .map(|(&u, &z)| model(&q, 0.0, self.um, u) - z),
        ))
    }
    fn jacobian(&self) -> Option<DMatrix<f64>> {
        Some(self.jac())
    }
}

/// Scale factors from the scaled parameters to SI.
fn scales(span: f64, ys: f64) -> [f64; 6] {
    [ys, ys, ys, 1.0 / span, 1.0 / span, ys / span]
}

struct Scaled {
    u: Vec<f64>,
    z: Vec<f64>,
    um: f64,
    span: f64,
    ym: f64,
    ys: f64,
    t0: f64,
    t_mid: f64,
}

fn scale_data(t: &[f64], y: &[f64], t0: f64, t_mid: f64) -> Scaled {
    let n = t.len();
    let span = (t[n - 1] - t0).max(t[n - 1] - t[0]).max(1e-9);
    let ym = y.iter().sum::<f64>() / n as f64;
    let var = y.iter().map(|v| (v - ym).powi(2)).sum::<f64>() / n as f64;
    let ys = if var > 0.0 { var.sqrt() } else { 1.0 };
    Scaled {
        u: t.iter().map(|&t| (t - t0) / span).collect(),
        z: y.iter().map(|&v| (v - ym) / ys).collect(),
        um: (t_mid - t0) / span,
        span,
        ym,
        ys,
        t0,
        t_mid,
    }
}

/// Linear least squares for (e, a, b[, c]) at fixed (g, w) in scaled units. Returns (coeffs, rss, cov/s^2).
fn linear(sc: &Scaled, g: f64, w: f64, drift: bool) -> Option<(Vec<f64>, f64, DMatrix<f64>)> {
    let np = if drift { 4 } else { 3 };
    let n = sc.u.len();
    let mut m = DMatrix::zeros(n, np);
    for (i, &u) in sc.u.iter().enumerate() {
        let e = (-g * u).exp();
        let (sn, cs) = (w * u).sin_cos();
        m[(i, 0)] = 1.0;
        m[(i, 1)] = e * cs;
        m[(i, 2)] = e * sn;
        if drift {
            m[(i, 3)] = u - sc.um;
        }
    }
    let z = DVector::from_column_slice(&sc.z);
    let ata = m.transpose() * &m;
    let inv = ata.clone().try_inverse()?;
    let coef = &inv * (m.transpose() * &z);
    let r = &m * &coef - &z;
    Some((coef.iter().copied().collect(), r.norm_squared(), inv))
}

/// The Jacobian's columns for the `free` parameters and the residuals, in scaled units, at `q`.
fn design(sc: &Scaled, q: &[f64; 6], free: &[usize]) -> (DMatrix<f64>, DVector<f64>) {
    let n = sc.u.len();
    let mut j = DMatrix::zeros(n, free.len());
    let mut r = DVector::zeros(n);
    for (i, &u) in sc.u.iter().enumerate() {
        let e = (-q[3] * u).exp();
        let (sn, cs) = (q[4] * u).sin_cos();
        let cols = [
            1.0,
            e * cs,
            e * sn,
            -u * e * (q[1] * cs + q[2] * sn),
            u * e * (-q[1] * sn + q[2] * cs),
            u - sc.um,
        ];
        for (c, &k) in free.iter().enumerate() {
            j[(i, c)] = cols[k];
        }
        r[i] = model(q, 0.0, sc.um, u) - sc.z[i];
    }
    (j, r)
}

/// The fit in SI units from the scaled solution `q`, with the covariance of the `free` parameters
/// from `inv = (J^T J)^-1` widened for correlated residuals ([`super::ar1`]).
fn finish(
    sc: &Scaled,
    q: [f64; 6],
    inv: &DMatrix<f64>,
    free: &[usize],
    frequency_fixed: bool,
) -> Result<DampedFit, FitError> {
    let n = sc.u.len();
    let p = free.len();
    let (j, r) = design(sc, &q, free);
    let rss = r.norm_squared();
    let (cov_scaled, noise) = ar1::covariance(&j, &r, inv);
    let k = scales(sc.span, sc.ys);
    let mut params = [0.0; 6];
    for i in 0..6 {
        params[i] = q[i] * k[i];
    }
    params[X_EQ] += sc.ym;
    let s2 = rss / (n - p) as f64;
    let mut cov = [[0.0; 6]; 6];
    let mut white_cov = [[0.0; 6]; 6];
    for (a, &i) in free.iter().enumerate() {
        for (b, &j) in free.iter().enumerate() {
            cov[i][j] = cov_scaled[(a, b)] * k[i] * k[j];
            white_cov[i][j] = inv[(a, b)] * s2 * k[i] * k[j];
        }
    }
    if params.iter().any(|v| !v.is_finite()) || cov.iter().flatten().any(|v| !v.is_finite()) {
        return Err(FitError::Singular);
    }
    Ok(DampedFit {
        params,
        cov,
        t0: sc.t0,
        t_mid: sc.t_mid,
        n,
        n_free: p,
        rms: (rss / n as f64).sqrt() * sc.ys,
        frequency_fixed,
        noise,
        white_cov,
    })
}

/// Fit with `gamma` and `omega_d` held at the given values (only `x_eq, a, b[, c]` free): for segments
/// too short to determine their own period.
pub fn fit_fixed_frequency(
    t: &[f64],
    y: &[f64],
    t0: f64,
    t_mid: f64,
    gamma: f64,
    omega_d: f64,
    drift: bool,
) -> Result<DampedFit, FitError> {
    let np = if drift { 4 } else { 3 };
    if t.len() <= np + 1 {
        return Err(FitError::TooFew { n: t.len(), p: np });
    }
    let sc = scale_data(t, y, t0, t_mid);
    let (g, w) = (gamma * sc.span, omega_d * sc.span);
    let (coef, _, inv) = linear(&sc, g, w, drift).ok_or(FitError::Singular)?;
    let mut q = [0.0, coef[0], coef[1], g, w, 0.0];
    q[0] = coef[0];
    q[1] = coef[1];
    q[2] = coef[2];
    if drift {
        q[5] = coef[3];
    }
    let free: Vec<usize> = if drift {
        vec![0, 1, 2, 5]
    } else {
        vec![0, 1, 2]
    };
    finish(&sc, q, &inv, &free, true)
}

/// Full nonlinear fit of one segment, started near angular frequency `omega_guess` (rad/s).
pub fn fit_damped(
    t: &[f64],
    y: &[f64],
    t0: f64,
    t_mid: f64,
    omega_guess: f64,
    drift: bool,
) -> Result<DampedFit, FitError> {
    let np = if drift { 6 } else { 5 };
    if t.len() <= np + 1 {
        return Err(FitError::TooFew { n: t.len(), p: np });
    }
    let sc = scale_data(t, y, t0, t_mid);
    let w_guess = omega_guess * sc.span;
    // Starting point: best of a grid in (w, g), the rest solved linearly.
    let mut best: Option<(f64, [f64; 6])> = None;
    for kw in -24..=24 {
        let w = w_guess * (1.0 + 0.005 * kw as f64);
        for g in [0.0, 0.1, 0.3, 0.7, 1.5, 3.0] {
            if let Some((c, rss, _)) = linear(&sc, g, w, drift) {
                if best.as_ref().is_none_or(|(r, _)| rss < *r) {
                    let mut q = [c[0], c[1], c[2], g, w, 0.0];
                    if drift {
                        q[5] = c[3];
                    }
                    best = Some((rss, q));
                }
            }
        }
    }
    let (_, q0) = best.ok_or(FitError::Singular)?;
    let start: Vec<f64> = if drift { q0.to_vec() } else { q0[..5].to_vec() };
    let problem = Problem {
        u: &sc.u,
        z: &sc.z,
        um: sc.um,
        drift,
        p: DVector::from_vec(start),
    };
    let (problem, report) = LevenbergMarquardt::new()
        .with_patience(200)
        .minimize(problem);
    if !report.termination.was_successful() {
        return Err(FitError::NoConvergence(format!("{:?}", report.termination)));
    }
    let q = problem.full();
    let j = problem.jac();
    let inv = (j.transpose() * &j)
        .try_inverse()
        .ok_or(FitError::Singular)?;
    let free: Vec<usize> = if drift {
        vec![0, 1, 2, 3, 4, 5]
    } else {
        vec![0, 1, 2, 3, 4]
    };
    finish(&sc, q, &inv, &free, false)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn recovers_noise_free_parameters() {
        let truth = [
            1e-3,
            4e-4,
            -2e-4,
            1.0 / 1800.0,
            2.0 * std::f64::consts::PI / 410.0,
            3e-9,
        ];
        let t: Vec<f64> = (0..2000).map(|k| 100.0 + k as f64).collect();
        let y: Vec<f64> = t.iter().map(|&t| model(&truth, 100.0, 1100.0, t)).collect();
        let f = fit_damped(&t, &y, 100.0, 1100.0, truth[OMEGA] * 1.01, true).unwrap();
        for (k, (got, want)) in f.params.iter().zip(&truth).enumerate() {
            assert!(
                (got - want).abs() <= 1e-7 * want.abs() + 1e-15,
                "{k}: {got} vs {want}"
            );
        }
        // Analytic second derivative against a finite difference.
        let h = 0.01;
        let fd = (f.eval(700.0 + h) - 2.0 * f.eval(700.0) + f.eval(700.0 - h)) / (h * h);
        assert!((fd - f.acceleration(700.0)).abs() < 1e-6 * f.acceleration(700.0).abs() + 1e-14);
    }
}
