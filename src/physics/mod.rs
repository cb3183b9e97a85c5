//! The torsion balance's physics in closed form, shared by the analyzer (theta to G) and the planner
//! (G to theta): moment of inertia, the far sphere's correction, gravitational torque, torsion constant.
//!
//! Geometry: two small spheres of mass `m` at distance `R` (the arm) from the fibre, two large spheres of
//! mass `M`, each at centre distance `d` from its small sphere when the beam is at equilibrium.
//! All quantities SI.

pub mod pull;

use std::f64::consts::PI;

/// Moment of inertia of the beam about the fibre: rod `m_rod l^2 / 12`, two spheres `m (R^2 + 2 r^2 / 5)`
/// each, plus any extra (mirror, clamps).
pub fn beam_inertia(
    rod_mass: f64,
    rod_length: f64,
    small_mass: f64,
    small_radius: f64,
    arm: f64,
    extra: f64,
) -> f64 {
    rod_mass * rod_length * rod_length / 12.0
        + 2.0 * small_mass * (arm * arm + 0.4 * small_radius * small_radius)
        + extra
}

/// Fraction of the near sphere's torque cancelled by the far large sphere:
/// `beta = d^3 / (d^2 + 4 R^2)^(3/2)` (the component of the far sphere's pull perpendicular to the arm).
pub fn far_sphere_beta(separation: f64, arm: f64) -> f64 {
    let d = separation;
    d.powi(3) / (d * d + 4.0 * arm * arm).powf(1.5)
}

/// Net gravitational torque on the beam with the large spheres in one position:
/// `tau = 2 R G m M (1 - beta) / d^2` (two sphere pairs, each at lever arm R).
pub fn gravitational_torque(
    g: f64,
    small_mass: f64,
    large_mass: f64,
    arm: f64,
    separation: f64,
) -> f64 {
    let beta = far_sphere_beta(separation, arm);
    2.0 * arm * g * small_mass * large_mass * (1.0 - beta) / (separation * separation)
}

/// Torsion constant from the moment of inertia and the natural angular frequency: `kappa = I omega_0^2`.
pub fn torsion_constant(inertia: f64, omega0: f64) -> f64 {
    inertia * omega0 * omega0
}

/// Natural angular frequency from the damped one and the amplitude decay rate: `omega_0^2 = omega_d^2 + gamma^2`.
pub fn natural_omega(omega_d: f64, gamma: f64) -> f64 {
    (omega_d * omega_d + gamma * gamma).sqrt()
}

/// Undamped period `2 pi / omega_0` of a torsion pendulum of inertia `I` and constant `kappa`.
pub fn period(inertia: f64, kappa: f64) -> f64 {
    2.0 * PI * (inertia / kappa).sqrt()
}

/// G from the equilibrium deflection (half the angle between the two mass positions' equilibria):
/// `G = kappa theta d^2 / (2 R m M (1 - beta))`.
pub fn g_from_deflection(
    kappa: f64,
    theta: f64,
    small_mass: f64,
    large_mass: f64,
    arm: f64,
    separation: f64,
) -> f64 {
    let beta = far_sphere_beta(separation, arm);
    kappa * theta * separation * separation / (2.0 * arm * small_mass * large_mass * (1.0 - beta))
}

/// Angular acceleration just after the large spheres swing from one position to the other (the torque
/// changes by twice its value): `alpha = 4 R G m M (1 - beta) / (I d^2)`.
pub fn initial_acceleration(
    g: f64,
    small_mass: f64,
    large_mass: f64,
    arm: f64,
    separation: f64,
    inertia: f64,
) -> f64 {
    2.0 * gravitational_torque(g, small_mass, large_mass, arm, separation) / inertia
}

/// G from the initial angular acceleration (inverse of [`initial_acceleration`]).
pub fn g_from_acceleration(
    alpha: f64,
    small_mass: f64,
    large_mass: f64,
    arm: f64,
    separation: f64,
    inertia: f64,
) -> f64 {
    let beta = far_sphere_beta(separation, arm);
    alpha * inertia * separation * separation / (4.0 * arm * small_mass * large_mass * (1.0 - beta))
}

/// CODATA 2018 recommended value of the Newtonian constant of gravitation, m^3 kg^-1 s^-2, and its
/// standard uncertainty (CODATA 2018: G = 6.674 30(15) x 10^-11).
pub const G_CODATA_2018: f64 = 6.674_30e-11;
pub const G_CODATA_2018_U: f64 = 0.000_15e-11;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn closed_form_for_rod_of_length_2r() {
        // Common practice, no source: for a thin rod of length 2R and point-like small spheres,
        // G = 2 pi^2 R theta d^2 (m_rod/3 + 2m) / (m M T^2), ignoring beta. Hand-worked numbers:
        // R = 0.05 m, theta = 1e-3 rad, d = 0.046 m, m_rod = 0.02 kg, m = 0.015 kg, M = 1.5 kg, T = 600 s
        // give G = 2 pi^2 * 0.05 * 1e-3 * 0.002116 * (0.02/3 + 0.03) / (0.015 * 1.5 * 360000)
        //        = 2 pi^2 * 1.058e-7 * 0.0366667 / 8100 = 2.0884e-6 * 0.036667 / 8100 = 9.4537e-12 (hand arithmetic).
        let (r, theta, d, m_rod, m, big, t) = (0.05, 1e-3, 0.046, 0.02, 0.015, 1.5, 600.0);
        let inertia = beam_inertia(m_rod, 2.0 * r, m, 0.0, r, 0.0);
        let kappa = torsion_constant(inertia, 2.0 * PI / t);
        // Undo the far-sphere correction to compare with the closed form that ignores it.
        let g = g_from_deflection(kappa, theta, m, big, r, d) * (1.0 - far_sphere_beta(d, r));
        let closed =
            2.0 * PI * PI * r * theta * d * d * (m_rod / 3.0 + 2.0 * m) / (m * big * t * t);
        assert!((g / closed - 1.0).abs() < 1e-12, "{g} vs {closed}");
        assert!((closed / 9.4537e-12 - 1.0).abs() < 1e-4, "{closed}");
    }

    #[test]
    fn deflection_and_acceleration_invert() {
        let (m, big, r, d) = (0.0146, 1.5, 0.05, 0.0465);
        let inertia = beam_inertia(0.01, 0.1, m, 0.0075, r, 1e-6);
        let kappa = torsion_constant(inertia, 2.0 * PI / 520.0);
        let theta = gravitational_torque(G_CODATA_2018, m, big, r, d) / kappa;
        let g = g_from_deflection(kappa, theta, m, big, r, d);
        assert!((g / G_CODATA_2018 - 1.0).abs() < 1e-12);
        let alpha = initial_acceleration(G_CODATA_2018, m, big, r, d, inertia);
        assert!(
            (g_from_acceleration(alpha, m, big, r, d, inertia) / G_CODATA_2018 - 1.0).abs() < 1e-12
        );
        assert!((period(inertia, kappa) - 520.0).abs() < 1e-9);
    }
}
