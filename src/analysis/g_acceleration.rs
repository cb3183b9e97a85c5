//! The sixth step: G by the initial angular acceleration at the moves, and its ratio to G by
//! deflection (where the apparatus' geometry cancels).

use super::gravity::{self, Apparatus, Deflection};
use super::{uncertainty, AccelerationResult, AnalysisOptions};
use crate::units::Measured;

/// What the acceleration method needs from the earlier steps.
#[derive(Debug, Clone, Copy)]
pub struct AccelerationInput<'a> {
    /// Sample times, s, and twist angles, rad.
    pub t: &'a [f64],
    pub y: &'a [f64],
    /// Times of the moves, s, and the segments' `(start, end)`, s.
    pub moves: &'a [f64],
    pub bounds: &'a [(f64, f64)],
    /// Time left out either side of each move, s.
    pub guard: f64,
    /// Combined natural period, s, and angular frequency, rad/s.
    pub period0: f64,
    pub omega0: Measured,
    /// Decay rate (1/s) and damped angular frequency (rad/s) held in the fits.
    pub gamma_v: f64,
    pub omega_d: f64,
}

/// G by the acceleration method, `None` (with a warning) when no move has enough samples either
/// side or its propagation fails.
pub fn g_by_acceleration(
    apparatus: &Apparatus,
    input: &AccelerationInput,
    deflection: &Deflection,
    opts: &AnalysisOptions,
    warnings: &mut Vec<String>,
) -> Option<AccelerationResult> {
    let acceleration = gravity::acceleration(
        input.t,
        input.y,
        input.moves,
        input.bounds,
        opts.accel_window_periods * input.period0,
        input.guard,
        (input.gamma_v, input.omega_d),
    )
    .and_then(|acc| {
        let inputs = apparatus.acceleration_inputs(acc.alpha);
        let g_acc = uncertainty::gum(
            &inputs,
            apparatus.g_acceleration_model(deflection.theta_g.value),
        )
        .ok()?;
        let th = deflection.theta_g;
        let w0 = input.omega0;
        let r = acc.alpha.value / (2.0 * w0.value * w0.value * th.value);
        let rel =
            (acc.alpha.relative().powi(2) + (2.0 * w0.relative()).powi(2) + th.relative().powi(2))
                .sqrt();
        Some(AccelerationResult {
            acceleration: acc,
            g: g_acc,
            ratio_to_deflection: Measured::new(r, r.abs() * rel),
        })
    });
    if acceleration.is_none() {
        warnings.push("no move had enough samples either side for the acceleration method".into());
    }
    acceleration
}
