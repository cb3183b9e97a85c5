//! G two ways, with the measurement models the uncertainty propagation runs through.
//!
//! - Final deflection: `theta_G` is half the angle between the equilibria of the two mass positions.
//!   With three or more segments each interleaved triple A-B-A (or B-A-B) gives
//!   `D = eq_2 - (lambda eq_1 + (1 - lambda) eq_3)`, the middle equilibrium against the outer two
//!   interpolated linearly to its time, so a linear drift cancels; `theta_G` is the mean of `|D| / 2`,
//!   its uncertainty propagated from the equilibria's (the triples share segments, so the mean is
//!   written as one linear combination of the equilibria). Then `kappa = I omega_0^2` and
//!   `G = kappa theta_G / (tau_0 - theta_G tau')`, with the torque per unit G on the whole beam
//!   (small spheres, far spheres and rod) and its change as the beam turns ([`BeamPull`]).
//! - Initial angular acceleration: at each move the torque changes by `2 tau`, so the beam's angular
//!   acceleration jumps by `alpha = 2 G (tau_0 - theta_G tau') / I`. The acceleration
//!   just after the move comes from a fit of the oscillator (decay and frequency held at the fitted
//!   values, level and phase free) on the early part of the new segment, extrapolated to the move;
//!   the acceleration just before from the same fit on the late part of the old segment. This uses
//!   the inertia but not the torsion constant, and data
//!   near the moves rather than the settled equilibria.

use super::damped::{fit_fixed_frequency, DampedFit};
use super::uncertainty::Input;
use crate::lever::Lever;
use crate::physics;
use crate::physics::pull::BeamPull;
use crate::setup::Setup;
use crate::units::{Measured, Radians};
use nalgebra::{DMatrix, DVector};

/// The deflection from the segments' equilibria.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Deflection {
    /// `theta_G`, rad (positive).
    pub theta_g: Measured,
    /// One estimate of `theta_G` per triple (or the single pair), rad.
    pub estimates: Vec<f64>,
    /// Sample standard deviation of `estimates` (`None` with fewer than two).
    pub scatter: Option<f64>,
    /// Birge ratio of the triples' estimates, `sqrt(chi^2 / (k - 1))` against their covariance from
    /// the equilibria's uncertainties (`None` with fewer than two triples). Above 1, the equilibria
    /// wander between segments more than within them (a creeping fibre, a drifting screen) and
    /// `theta_g`'s uncertainty is scaled up by it.
    pub birge: Option<f64>,
    /// Whether the drift-cancelling triples were used (false: a single pair).
    pub triples: bool,
    /// Whether every triple's deflection had the sign expected from alternating mass positions.
    pub alternating: bool,
    /// Mean of the equilibria, rad (where the two positions' readings are centred).
    pub theta_mid: f64,
}

/// `theta_G` from equilibria `(time, equilibrium)` of successive segments with alternating positions.
pub fn deflection(eqs: &[(f64, Measured)]) -> Option<Deflection> {
    let n = eqs.len();
    if n < 2 {
        return None;
    }
    let theta_mid = eqs.iter().map(|e| e.1.value).sum::<f64>() / n as f64;
    if n == 2 {
        let d = (eqs[1].1.value - eqs[0].1.value) / 2.0;
        let u = eqs[0].1.u.hypot(eqs[1].1.u) / 2.0;
        return Some(Deflection {
            theta_g: Measured::new(d.abs(), u),
            estimates: vec![d.abs()],
            scatter: None,
            birge: None,
            triples: false,
            alternating: true,
            theta_mid,
        });
    }
    let k = n - 2;
    // Row j: each equilibrium's weight in triple j's estimate.
    let mut rows = DMatrix::zeros(k, n);
    let mut estimates = Vec::with_capacity(k);
    let mut raw = Vec::with_capacity(k);
    for j in 0..k {
        let (t1, t2, t3) = (eqs[j].0, eqs[j + 1].0, eqs[j + 2].0);
        let lam = (t3 - t2) / (t3 - t1);
        let d = eqs[j + 1].1.value - (lam * eqs[j].1.value + (1.0 - lam) * eqs[j + 2].1.value);
        raw.push((d, lam));
    }
    let s0 = raw[0].0.signum();
    let mut alternating = true;
    for (j, (d, lam)) in raw.iter().enumerate() {
        let s = if j % 2 == 0 { s0 } else { -s0 };
        if d * s <= 0.0 {
            alternating = false;
        }
        estimates.push(s * d / 2.0);
        rows[(j, j + 1)] = s / 2.0;
        rows[(j, j)] = -s * lam / 2.0;
        rows[(j, j + 2)] = -s * (1.0 - lam) / 2.0;
    }
    // The mean of the estimates weighs each equilibrium by its column's mean.
    let w: Vec<f64> = rows.column_iter().map(|c| c.sum() / k as f64).collect();
    let mean = estimates.iter().sum::<f64>() / k as f64;
    let u = w
        .iter()
        .zip(eqs)
        .map(|(wi, e)| (wi * e.1.u).powi(2))
        .sum::<f64>()
        .sqrt();
    let scatter = (k >= 2).then(|| {
        (estimates.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (k as f64 - 1.0)).sqrt()
    });
    let birge = birge_ratio(&rows, eqs, &estimates);
    Some(Deflection {
        theta_g: Measured::new(mean.abs(), u * birge.unwrap_or(1.0).max(1.0)),
        estimates,
        scatter,
        birge,
        triples: true,
        alternating,
        theta_mid,
    })
}

/// `sqrt(chi^2 / (k - 1))` of the `k` triple estimates `e = W x` of the equilibria `x`, with
/// covariance `C = W diag(u^2) W^T` and `chi^2` about their generalised least-squares mean,
/// `e^T C^-1 e - (1^T C^-1 e)^2 / 1^T C^-1 1` (Birge, Phys. Rev. 40 (1932) 207, cited from memory);
/// its expectation is 1 when the equilibria scatter only as their uncertainties say.
fn birge_ratio(rows: &DMatrix<f64>, eqs: &[(f64, Measured)], estimates: &[f64]) -> Option<f64> {
    let k = estimates.len();
    if k < 2 {
        return None;
    }
    let var = DMatrix::from_diagonal(&DVector::from_iterator(
        eqs.len(),
        eqs.iter().map(|e| e.1.u * e.1.u),
    ));
    let c = rows * var * rows.transpose();
    let ci = c.try_inverse()?;
    let e = DVector::from_column_slice(estimates);
    let one = DVector::from_element(k, 1.0);
    let (ee, oe, oo) = (
        (e.transpose() * &ci * &e)[0],
        (one.transpose() * &ci * &e)[0],
        (one.transpose() * &ci * &one)[0],
    );
    let chi2 = ee - oe * oe / oo;
    (chi2.is_finite() && oo > 0.0).then(|| (chi2.max(0.0) / (k - 1) as f64).sqrt())
}

/// The acceleration jump at one move.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct MoveAcceleration {
    /// Move time, s.
    pub t: f64,
    /// Acceleration after minus before, rad/s^2 (signed).
    pub jump: Measured,
}

/// The acceleration method's result over all moves.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Acceleration {
    /// Weighted mean of the jumps' magnitudes (signs aligned with alternation), rad/s^2.
    pub alpha: Measured,
    pub per_move: Vec<MoveAcceleration>,
}

/// Acceleration just before/after `t_move` from the samples within `window` s of it.
fn side(
    t: &[f64],
    y: &[f64],
    t_move: f64,
    gamma: f64,
    omega_d: f64,
) -> Option<(f64, f64, DampedFit)> {
    let fit = fit_fixed_frequency(t, y, t_move, t_move, gamma, omega_d, false).ok()?;
    let g = fit.acceleration_gradient(t_move);
    let mut var = 0.0;
    for a in 0..6 {
        for b in 0..6 {
            var += g[a] * fit.cov[a][b] * g[b];
        }
    }
    Some((fit.acceleration(t_move), var.max(0.0).sqrt(), fit))
}

/// The jump of angular acceleration at each move, from windows of `window` s either side (kept within
/// the neighbouring segments `bounds[i]..bounds[i+1]`, and `guard` s away from the move), for an
/// oscillator of decay rate `gamma` (1/s) and damped angular frequency `omega_d` (rad/s).
pub fn acceleration(
    t: &[f64],
    y: &[f64],
    moves: &[f64],
    bounds: &[(f64, f64)],
    window: f64,
    guard: f64,
    (gamma, omega_d): (f64, f64),
) -> Option<Acceleration> {
    let mut per_move = Vec::new();
    for (i, &tm) in moves.iter().enumerate() {
        let (before_lo, after_hi) = match (bounds.get(i), bounds.get(i + 1)) {
            (Some(b), Some(a)) => ((tm - window).max(b.0), (tm + window).min(a.1)),
            _ => continue,
        };
        let pick = |lo: f64, hi: f64| -> (Vec<f64>, Vec<f64>) {
            t.iter()
                .zip(y)
                .filter(|(tt, _)| **tt >= lo && **tt < hi)
                .map(|(a, b)| (*a, *b))
                .unzip()
        };
        let (tb, yb) = pick(before_lo, tm - guard);
        let (ta, ya) = pick(tm + guard, after_hi);
        if tb.len() < 8 || ta.len() < 8 {
            continue;
        }
        let (Some(b), Some(a)) = (
            side(&tb, &yb, tm, gamma, omega_d),
            side(&ta, &ya, tm, gamma, omega_d),
        ) else {
            continue;
        };
        per_move.push(MoveAcceleration {
            t: tm,
            jump: Measured::new(a.0 - b.0, a.1.hypot(b.1)),
        });
    }
    if per_move.is_empty() {
        return None;
    }
    let s0 = per_move[0].jump.value.signum();
    let (mut sw, mut swx) = (0.0, 0.0);
    for (j, m) in per_move.iter().enumerate() {
        let s = if j % 2 == 0 { s0 } else { -s0 };
        let wt = if m.jump.u > 0.0 {
            1.0 / (m.jump.u * m.jump.u)
        } else {
            1e300
        };
        sw += wt;
        swx += wt * s * m.jump.value;
    }
    let mean = swx / sw;
    let u = if sw >= 1e300 { 0.0 } else { (1.0 / sw).sqrt() };
    Some(Acceleration {
        alpha: Measured::new(mean.abs(), u),
        per_move,
    })
}

/// Index of the first lever input in the deflection and acceleration models' inputs (after the shared
/// beam and source part).
const BEAM_INPUTS: usize = 8;

/// The apparatus quantities the G formulas need, unpacked from the setup once.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Apparatus {
    pub small_mass: Measured,
    pub small_radius: Measured,
    pub arm: Measured,
    pub rod_mass: Measured,
    pub rod_length: Measured,
    pub extra_inertia: Measured,
    pub large_mass: Measured,
    pub separation: Measured,
    /// Mirror to scale (`L`), m.
    pub screen_distance: Measured,
    /// Scale reading of the foot point (`x0`), m.
    pub zero: Measured,
    /// The nominal lever (`L`, `x0` at their values, and the scale's shape).
    pub lever: Lever,
    /// The rod's height above the spheres' plane, m (central value; it enters only the rod's pull).
    pub rod_height: f64,
}

impl Apparatus {
    pub fn from_setup(setup: &Setup) -> Self {
        let b = &setup.beam;
        let s = &setup.sources;
        Self {
            small_mass: b.small_mass,
            small_radius: b.small_radius,
            arm: b.arm,
            rod_mass: b.rod_mass,
            rod_length: b.rod_length,
            extra_inertia: b.extra_inertia,
            large_mass: s.large_mass,
            separation: s.separation,
            screen_distance: setup.lever.screen_distance,
            zero: setup.lever.zero,
            lever: Lever::from_setup(setup),
            rod_height: b.rod_height.value,
        }
    }

    /// The parts the spheres pull on, from the first entries of [`Apparatus::beam_inputs`].
    pub fn pull_of(&self, x: &[f64]) -> BeamPull {
        BeamPull {
            small_mass: x[0],
            arm: x[2],
            rod_mass: x[3],
            rod_length: x[4],
            rod_height: self.rod_height,
            large_mass: x[6],
            separation: x[7],
        }
    }

    /// The nominal parts the spheres pull on.
    pub fn pull(&self) -> BeamPull {
        self.pull_of(
            &self
                .beam_inputs()
                .iter()
                .map(|i| i.value)
                .collect::<Vec<_>>(),
        )
    }

    /// The beam's and the sources' inputs (the first entries of both models' inputs).
    pub fn beam_inputs(&self) -> Vec<Input> {
        vec![
            Input::measured("small_mass m", self.small_mass, "kg"),
            Input::measured("small_radius r", self.small_radius, "m"),
            Input::measured("arm R", self.arm, "m"),
            Input::measured("rod_mass", self.rod_mass, "kg"),
            Input::measured("rod_length", self.rod_length, "m"),
            Input::measured("extra_inertia", self.extra_inertia, "kg m^2"),
            Input::measured("large_mass M", self.large_mass, "kg"),
            Input::measured("separation d", self.separation, "m"),
        ]
    }

    /// Inputs of the deflection model: beam and sources, the lever (`L`, `x0`), the half scale
    /// difference `S` between the two positions' equilibrium readings, and the natural period `T0`.
    pub fn deflection_inputs(&self, half_scale: Measured, period: Measured) -> Vec<Input> {
        let mut v = self.beam_inputs();
        v.push(Input::measured(
            "screen_distance L",
            self.screen_distance,
            "m",
        ));
        v.push(Input::measured("zero x0", self.zero, "m"));
        v.push(Input::measured("half scale difference S", half_scale, "m"));
        v.push(Input::measured("period T0", period, "s"));
        v
    }

    /// The deflection model: G from [`Apparatus::deflection_inputs`]; `x_mid` is the scale reading
    /// midway between the two positions' equilibria (held fixed).
    pub fn g_deflection_model(&self, x_mid: f64) -> impl Fn(&[f64]) -> f64 + '_ {
        let shape = self.lever.shape;
        move |x: &[f64]| {
            let k = BEAM_INPUTS;
            let lever = Lever {
                distance_m: x[k],
                zero_m: x[k + 1],
                shape,
            };
            let s = x[k + 2];
            let theta = (lever.angle(x_mid + s).0 - lever.angle(x_mid - s).0) / 2.0;
            let inertia = inertia_of(x);
            let omega0 = 2.0 * std::f64::consts::PI / x[k + 3];
            let kappa = physics::torsion_constant(inertia, omega0);
            kappa * theta / self.pull_of(x).effective_torque_per_g(theta)
        }
    }

    /// Inputs of the acceleration model: beam and sources, `L`, and the acceleration jump `alpha`
    /// measured in angle units of the nominal lever.
    pub fn acceleration_inputs(&self, alpha: Measured) -> Vec<Input> {
        let mut v = self.beam_inputs();
        v.push(Input::measured(
            "screen_distance L",
            self.screen_distance,
            "m",
        ));
        v.push(Input::measured(
            "acceleration jump alpha",
            alpha,
            "rad s^-2",
        ));
        v
    }

    /// The acceleration model: G from [`Apparatus::acceleration_inputs`]. The angle scale goes as
    /// `1 / L` (the small-angle lever), so an acceleration read with the nominal `L_nom` is
    /// `alpha L_nom / L`. `theta_g` is the measured deflection, for the pull on the turned beam
    /// ([`BeamPull::effective_torque_per_g`]; its uncertainty is negligible beside alpha's there).
    pub fn g_acceleration_model(&self, theta_g: f64) -> impl Fn(&[f64]) -> f64 + '_ {
        let l_nom = self.screen_distance.value;
        move |x: &[f64]| {
            let k = BEAM_INPUTS;
            let alpha = x[k + 1] * l_nom / x[k];
            let torque = self.pull_of(x).effective_torque_per_g(theta_g);
            alpha * inertia_of(x) / (2.0 * torque)
        }
    }
}

/// Moment of inertia from the first entries of [`Apparatus::beam_inputs`].
pub fn inertia_of(x: &[f64]) -> f64 {
    physics::beam_inertia(x[3], x[4], x[0], x[1], x[2], x[5])
}

/// Half the scale difference between the readings of `theta_mid +- theta_g` on `lever`, and its
/// uncertainty from `theta_g`'s.
pub fn half_scale(lever: &Lever, theta_mid: f64, theta_g: Measured) -> Measured {
    let hi = lever.reading(Radians(theta_mid + theta_g.value));
    let lo = lever.reading(Radians(theta_mid - theta_g.value));
    let s = (hi - lo) / 2.0;
    // d S / d theta_g = (1/2)(dx/dtheta at hi + at lo).
    let dxdt = 0.5 * (1.0 / lever.sensitivity(hi) + 1.0 / lever.sensitivity(lo));
    Measured::new(s, theta_g.u * dxdt)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn triples_cancel_a_linear_drift() {
        // Equilibria alternating +-1e-4 about a line 1e-3 + 2e-8 t.
        let eqs: Vec<(f64, Measured)> = (0..5)
            .map(|k| {
                let t = 100.0 + 1000.0 * k as f64;
                let s = if k % 2 == 0 { 1.0 } else { -1.0 };
                (t, Measured::new(1e-3 + 2e-8 * t + s * 1e-4, 1e-6))
            })
            .collect();
        let d = deflection(&eqs).unwrap();
        assert!((d.theta_g.value - 1e-4).abs() < 1e-15, "{:?}", d);
        assert!(d.alternating && d.triples);
        // Three triples over five equilibria: weights (1/2 of +-1, -1/2, -1/2)/3 summed per segment.
        let w: [f64; 5] = [
            -1.0 / 12.0,
            1.0 / 6.0 + 1.0 / 12.0,
            -1.0 / 4.0 - 1.0 / 4.0 + 1.0 / 6.0,
            1.0 / 6.0 + 1.0 / 12.0,
            -1.0 / 12.0,
        ];
        let u = w.iter().map(|x| x * x).sum::<f64>().sqrt() * 1e-6;
        assert!((d.theta_g.u / u - 1.0).abs() < 1e-9, "{} {u}", d.theta_g.u);
    }
}
