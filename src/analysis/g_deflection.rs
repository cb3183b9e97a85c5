//! The fifth step: G by the final deflection, `theta_G` read back as the half scale difference of the
//! two positions' equilibria and propagated through the deflection model, first-order (GUM) and by
//! Monte Carlo (JCGM 101).

use super::gravity::{half_scale, Apparatus, Deflection};
use super::{uncertainty, AnalysisError, AnalysisOptions};
use crate::units::{Measured, Radians};

/// G by deflection from `deflection` and the natural `period` (s), GUM and Monte Carlo.
pub fn g_by_deflection(
    apparatus: &Apparatus,
    deflection: &Deflection,
    period: Measured,
    opts: &AnalysisOptions,
) -> Result<(uncertainty::Gum, uncertainty::MonteCarlo), AnalysisError> {
    let lever = &apparatus.lever;
    let half = half_scale(lever, deflection.theta_mid, deflection.theta_g);
    let x_mid = 0.5
        * (lever.reading(Radians(deflection.theta_mid + deflection.theta_g.value))
            + lever.reading(Radians(deflection.theta_mid - deflection.theta_g.value)));
    let inputs = apparatus.deflection_inputs(half, period);
    let model = apparatus.g_deflection_model(x_mid);
    let g = uncertainty::gum(&inputs, &model)?;
    let g_mc = uncertainty::monte_carlo(&inputs, &model, opts.mc_draws, opts.mc_seed)?;
    Ok((g, g_mc))
}
