//! The large spheres' pull on the whole beam: the two small spheres and the rod that carries them, with
//! the torque's change as the beam turns (the spheres' gravitational stiffness).
//!
//! Frame: the fibre is the z axis; at the beam's equilibrium with the large spheres in one position the
//! beam lies along x, the small spheres at `(+-R, 0, 0)` and the large ones at `(R, d, 0)` and
//! `(-R, -d, 0)`, so that `d` is the centre distance of each large sphere from its small sphere at rest
//! (as the setup gives it). The beam turned by `phi` (towards the near spheres for `phi > 0`) has its
//! points at `(x cos phi, x sin phi, z)`.
//!
//! A point mass `m` at `p` and a sphere `M` at `s` (a sphere attracts as a point outside it) give the torque
//! `tau_z = G M m (p x s)_z / |s - p|^3` about the fibre. The rod, a uniform line of mass `m_rod` over
//! `x` in `[-l/2, l/2]` at height `h` above the spheres' plane, integrates in closed form: with
//! `A = s_y cos phi - s_x sin phi` (the sphere's distance across the rod's line), `B = s_x cos phi +
//! s_y sin phi` (its position along it) and `D^2 = A^2 + h^2`,
//! `tau_z = G M lambda A [F(l/2 - B) - F(-l/2 - B)]`, `F(u) = (B u / D^2 - 1) / sqrt(u^2 + D^2)`
//! (the primitive of `x / ((x - B)^2 + D^2)^(3/2)`). Far from the rod's ends this is the field of an
//! infinite line, which a cylinder shares (Gauss's law in two dimensions), so the rod's diameter does not
//! enter the pull.
//!
//! `kappa theta = tau` holds at each equilibrium, while the period measures `kappa - dtau/dphi`. Both G
//! methods then need the torque per unit G as `tau_0 - theta tau'` ([`effective_torque_per_g`]): for
//! the deflection method because the fibre's constant is the measured one plus the stiffness, for the
//! acceleration method because right after a move the spheres pull on a beam still turned towards the
//! old position.

/// The parts of the beam that the large spheres pull on (central values, SI).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BeamPull {
    /// Mass of each small sphere, kg.
    pub small_mass: f64,
    /// Fibre to small-sphere centre, m.
    pub arm: f64,
    /// The rod's mass, kg (zero for none).
    pub rod_mass: f64,
    /// The rod's length end to end, m (centred on the fibre).
    pub rod_length: f64,
    /// The rod's height above (or below) the spheres' centre plane, m.
    pub rod_height: f64,
    /// Mass of each large sphere, kg.
    pub large_mass: f64,
    /// Centre distance of each large sphere from its small sphere at rest, m.
    pub separation: f64,
}

/// The step in `phi` for the stiffness's central difference, rad. The torque varies on the scale of
/// `d / R` radians (about 1 rad), so a step of 1e-4 rad leaves a truncation error of order 1e-8 of the
/// derivative, and the torque's rounding error (1e-16 relative) divided by the step stays below 1e-11.
const STEP_RAD: f64 = 1e-4;

impl BeamPull {
    fn sources(&self) -> [(f64, f64); 2] {
        [(self.arm, self.separation), (-self.arm, -self.separation)]
    }

    /// The torque on the small spheres alone, per unit G, N m / (m^3 kg^-1 s^-2).
    pub fn spheres_torque_per_g(&self, phi: f64) -> f64 {
        let (c, s) = (phi.cos(), phi.sin());
        let mut tau = 0.0;
        for (sx, sy) in self.sources() {
            for x in [self.arm, -self.arm] {
                let (px, py) = (x * c, x * s);
                let (dx, dy) = (sx - px, sy - py);
                let r2 = dx * dx + dy * dy;
                tau += self.large_mass * self.small_mass * (px * sy - py * sx) / (r2 * r2.sqrt());
            }
        }
        tau
    }

    /// The torque on the rod alone, per unit G.
    pub fn rod_torque_per_g(&self, phi: f64) -> f64 {
        if self.rod_mass == 0.0 || self.rod_length == 0.0 {
            return 0.0;
        }
        let (c, s) = (phi.cos(), phi.sin());
        let lambda = self.rod_mass / self.rod_length;
        let half = self.rod_length / 2.0;
        let mut tau = 0.0;
        for (sx, sy) in self.sources() {
            let a = sy * c - sx * s;
            let b = sx * c + sy * s;
            let d2 = a * a + self.rod_height * self.rod_height;
            let f = |u: f64| (b * u / d2 - 1.0) / (u * u + d2).sqrt();
            tau += self.large_mass * lambda * a * (f(half - b) - f(-half - b));
        }
        tau
    }

    /// The whole beam's torque per unit G with the beam turned by `phi` from its rest position.
    pub fn torque_per_g(&self, phi: f64) -> f64 {
        self.spheres_torque_per_g(phi) + self.rod_torque_per_g(phi)
    }

    /// `d tau / d phi` per unit G at rest (positive: the pull grows as the beam turns towards the near
    /// spheres), N m / rad / (m^3 kg^-1 s^-2).
    pub fn stiffness_per_g(&self) -> f64 {
        (self.torque_per_g(STEP_RAD) - self.torque_per_g(-STEP_RAD)) / (2.0 * STEP_RAD)
    }

    /// The torque per unit G that both G methods divide by: `tau_0 - theta tau'`, with `theta` the
    /// deflection (half the angle between the two positions' equilibria).
    pub fn effective_torque_per_g(&self, theta: f64) -> f64 {
        self.torque_per_g(0.0) - theta * self.stiffness_per_g()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::gravitational_torque;

    fn apparatus(rod_mass: f64, rod_length: f64) -> BeamPull {
        BeamPull {
            small_mass: 0.0146,
            arm: 0.05,
            rod_mass,
            rod_length,
            rod_height: 0.0,
            large_mass: 1.5,
            separation: 0.0465,
        }
    }

    #[test]
    fn spheres_alone_give_the_far_sphere_formula() {
        let p = apparatus(0.0, 0.1);
        let closed = gravitational_torque(1.0, 0.0146, 1.5, 0.05, 0.0465);
        assert!((p.torque_per_g(0.0) / closed - 1.0).abs() < 1e-13);
    }

    #[test]
    fn rod_closed_form_matches_a_midpoint_sum() {
        // The rod as 200 000 point masses, each pulled as in `spheres_torque_per_g`.
        let mut p = apparatus(0.01, 0.1);
        p.rod_height = 0.004;
        let n = 200_000;
        for phi in [0.0, 0.01, -0.02] {
            let (c, s) = (f64::cos(phi), f64::sin(phi));
            let mut sum = 0.0;
            for i in 0..n {
                let x = -0.05 + 0.1 * (i as f64 + 0.5) / n as f64;
                let (px, py, pz) = (x * c, x * s, p.rod_height);
                for (sx, sy) in p.sources() {
                    let (dx, dy, dz) = (sx - px, sy - py, -pz);
                    let r = (dx * dx + dy * dy + dz * dz).sqrt();
                    sum += 1.5 * (0.01 / n as f64) * (px * sy - py * sx) / (r * r * r);
                }
            }
            let closed = p.rod_torque_per_g(phi);
            assert!(
                (closed / sum - 1.0).abs() < 1e-8,
                "phi {phi}: {closed} vs {sum}"
            );
        }
    }
}
