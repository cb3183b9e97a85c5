//! Least-squares fit of a 2-D Gaussian on a local background plane, over the unclipped pixels only.
//!
//! Clipped pixels carry only the information "at least white", so they are treated as censored and left
//! out; the wings that remain fix the centre. With Gaussian noise the least-squares fit is the
//! maximum-likelihood estimate, which attains the Cramér–Rao bound asymptotically.

use levenberg_marquardt::{LeastSquaresProblem, LevenbergMarquardt};
use nalgebra::storage::Owned;
#[cfg(test)]
use nalgebra::DMatrix;
use nalgebra::{DVector, Dyn, Vector5, U5};

/// Relative tolerance of the fit: the square root of f64's machine epsilon, MINPACK's default for
/// lmder (common practice, no source).
const FIT_TOLERANCE: f64 = 1.490_116_119_384_765_6e-8;

/// One pixel used in the fit: its position and its value with the fixed background slopes removed.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Sample {
    pub x: f64,
    pub y: f64,
    pub v: f64,
}

/// Parameters of `v = offset + amp * exp(-((x - x0)^2 + (y - y0)^2) / (2 sigma^2))`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Gaussian {
    pub x0: f64,
    pub y0: f64,
    pub amp: f64,
    pub offset: f64,
    pub sigma: f64,
}

struct Problem<'a> {
    samples: &'a [Sample],
    p: Vector5<f64>,
    /// exp(...) of each sample at the current parameters.
    e: Vec<f64>,
}

impl Problem<'_> {
    fn refresh(&mut self) {
        let (x0, y0, s) = (self.p[0], self.p[1], self.p[4]);
        let k = 1.0 / (2.0 * s * s);
        for (e, smp) in self.e.iter_mut().zip(self.samples) {
            let dx = smp.x - x0;
            let dy = smp.y - y0;
            *e = (-(dx * dx + dy * dy) * k).exp();
        }
    }
}

impl LeastSquaresProblem<f64, Dyn, U5> for Problem<'_> {
    type ResidualStorage = Owned<f64, Dyn>;
    type JacobianStorage = Owned<f64, Dyn, U5>;
    type ParameterStorage = Owned<f64, U5>;

    fn set_params(&mut self, p: &Vector5<f64>) {
        self.p = *p;
        self.refresh();
    }

    fn params(&self) -> Vector5<f64> {
        self.p
    }

    fn residuals(&self) -> Option<DVector<f64>> {
        let (a, b) = (self.p[2], self.p[3]);
        if !self.p.iter().all(|v| v.is_finite()) || self.p[4] == 0.0 {
            return None;
        }
        Some(DVector::from_iterator(
            self.samples.len(),
            self.samples
                .iter()
                .zip(&self.e)
                .map(|(s, &e)| b + a * e - s.v),
        ))
    }

    fn jacobian(&self) -> Option<nalgebra::OMatrix<f64, Dyn, U5>> {
        let (x0, y0, a, s) = (self.p[0], self.p[1], self.p[2], self.p[4]);
        if !self.p.iter().all(|v| v.is_finite()) || s == 0.0 {
            return None;
        }
        let s2 = s * s;
        let n = self.samples.len();
        let mut j = nalgebra::OMatrix::<f64, Dyn, U5>::zeros(n);
        for (i, (smp, &e)) in self.samples.iter().zip(&self.e).enumerate() {
            let dx = smp.x - x0;
            let dy = smp.y - y0;
            let ae = a * e;
            j[(i, 0)] = ae * dx / s2;
            j[(i, 1)] = ae * dy / s2;
            j[(i, 2)] = e;
            j[(i, 3)] = 1.0;
            j[(i, 4)] = ae * (dx * dx + dy * dy) / (s2 * s);
        }
        Some(j)
    }
}

/// Fit starting from `init`. `None` when the fit fails, does not converge, or ends somewhere
/// meaningless (non-positive amplitude, non-finite values). Needs more samples than parameters.
pub(crate) fn fit_gaussian(samples: &[Sample], init: Gaussian) -> Option<Gaussian> {
    if samples.len() < 8 {
        return None;
    }
    let mut problem = Problem {
        samples,
        p: Vector5::new(init.x0, init.y0, init.amp, init.offset, init.sigma),
        e: vec![0.0; samples.len()],
    };
    problem.refresh();
    // Stop when a step or the predicted drop of the sum of squares is below sqrt(machine epsilon)
    // relative (the usual MINPACK setting): positions then settle to ~1e-5 px, far below the noise,
    // instead of iterating to full machine precision.
    let (done, report) = LevenbergMarquardt::new()
        .with_ftol(FIT_TOLERANCE)
        .with_xtol(FIT_TOLERANCE)
        .with_patience(40)
        .minimize(problem);
    if !report.termination.was_successful() || !report.objective_function.is_finite() {
        return None;
    }
    let p = done.p;
    let g = Gaussian {
        x0: p[0],
        y0: p[1],
        amp: p[2],
        offset: p[3],
        sigma: p[4].abs(),
    };
    let finite = [g.x0, g.y0, g.amp, g.offset, g.sigma]
        .iter()
        .all(|v| v.is_finite());
    (finite && g.amp > 0.0 && g.sigma > 0.0).then_some(g)
}

/// Covariance-free check used in tests: the analytic Jacobian against finite differences.
#[cfg(test)]
fn jacobian_error(samples: &[Sample], at: Gaussian) -> f64 {
    let mut problem = Problem {
        samples,
        p: Vector5::new(at.x0, at.y0, at.amp, at.offset, at.sigma),
        e: vec![0.0; samples.len()],
    };
    problem.refresh();
    let analytic: DMatrix<f64> = problem
        .jacobian()
        .map(|j| DMatrix::from_column_slice(j.nrows(), 5, j.as_slice()))
        .unwrap_or_else(|| DMatrix::zeros(1, 1));
    let numeric = levenberg_marquardt::differentiate_numerically(&mut problem)
        .map(|j| DMatrix::from_column_slice(j.nrows(), 5, j.as_slice()))
        .unwrap_or_else(|| DMatrix::zeros(1, 1));
    (analytic - numeric).amax()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn samples(g: Gaussian, clip: f64) -> Vec<Sample> {
        let mut v = Vec::new();
        for y in 0..21 {
            for x in 0..21 {
                let (xf, yf) = (x as f64, y as f64);
                let val = g.offset
                    + g.amp
                        * (-((xf - g.x0).powi(2) + (yf - g.y0).powi(2))
                            / (2.0 * g.sigma * g.sigma))
                            .exp();
                if val < clip {
                    v.push(Sample {
                        x: xf,
                        y: yf,
                        v: val,
                    });
                }
            }
        }
        v
    }

    #[test]
    fn analytic_jacobian_matches_finite_differences() {
        let g = Gaussian {
            x0: 10.3,
            y0: 9.6,
            amp: 150.0,
            offset: 40.0,
            sigma: 2.4,
        };
        let s = samples(g, f64::INFINITY);
        assert!(jacobian_error(&s, g) < 1e-4);
    }

    #[test]
    fn recovers_a_noise_free_spot_with_and_without_its_core() {
        let truth = Gaussian {
            x0: 10.37,
            y0: 9.81,
            amp: 560.0,
            offset: 40.0,
            sigma: 2.5,
        };
        let start = Gaussian {
            x0: 10.0,
            y0: 10.0,
            amp: 300.0,
            offset: 35.0,
            sigma: 3.5,
        };
        for clip in [f64::INFINITY, 255.0] {
            let s = samples(truth, clip);
            let g = fit_gaussian(&s, start).expect("fit converges");
            assert!((g.x0 - truth.x0).abs() < 1e-6 && (g.y0 - truth.y0).abs() < 1e-6);
            assert!((g.sigma - truth.sigma).abs() < 1e-6 && (g.amp - truth.amp).abs() < 1e-3);
        }
        assert!(fit_gaussian(&[], start).is_none());
    }
}
