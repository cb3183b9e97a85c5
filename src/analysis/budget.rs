//! The beam's constants with their uncertainties: the moment of inertia and the torsion constant
//! `kappa = I omega_0^2` (GUM over the beam's inputs and the natural period), and the far-sphere
//! correction `beta`.

use super::gravity::{inertia_of, Apparatus};
use super::{uncertainty, AnalysisError};
use crate::physics;
use crate::units::Measured;
use std::f64::consts::PI;

/// The beam's constants.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BeamConstants {
    /// Moment of inertia of the beam, kg m^2.
    pub inertia: Measured,
    /// Torsion constant, N m / rad.
    pub kappa: Measured,
    /// Far-sphere correction `beta`.
    pub beta: f64,
}

/// Inertia and kappa for the natural `period` (s), with `beta`.
pub fn beam_budget(
    apparatus: &Apparatus,
    period: Measured,
) -> Result<BeamConstants, AnalysisError> {
    let mut beam_in = apparatus.beam_inputs();
    beam_in.push(uncertainty::Input::new(
        "period T0",
        period.value,
        period.u,
        "s",
    ));
    let t0_index = beam_in.len() - 1;
    let inertia_g = uncertainty::gum(&beam_in, inertia_of)?;
    let kappa_g = uncertainty::gum(&beam_in, |x| {
        physics::torsion_constant(inertia_of(x), 2.0 * PI / x[t0_index])
    })?;
    let beta = physics::far_sphere_beta(apparatus.separation.value, apparatus.arm.value);
    Ok(BeamConstants {
        inertia: Measured::new(inertia_g.value, inertia_g.u),
        kappa: Measured::new(kappa_g.value, kappa_g.u),
        beta,
    })
}
