//! Analysis: twist-angle series to period, segment equilibria, G and its uncertainty budget.
//!
//! [`analyze`] takes plain samples `(t, theta)`, the apparatus ([`Setup`]) and optionally the times the
//! masses were moved, and runs named steps in order, each with plain data in and out:
//! 1. [`clean`]: non-finite samples dropped (and counted), the time order checked, gaps listed; gaps
//!    are simply absent samples, so every fit uses only what was measured;
//! 2. [`moves`]: the moves (logged in an [`events`] file, or found in the trace by [`segments`]) cut
//!    the run into segments, the [`period`] spectrum's peak giving the frequency's starting guess;
//! 3. [`fit`]: a [`damped`]-sinusoid-plus-drift fit per segment (equilibrium, period, damping), stray
//!    samples left out by [`robust`], the moves' times refined from the data;
//! 4. [`equilibria`]: each segment's result, with the [`turning`]-point rest point beside it, and
//!    `theta_G` from A-B-A triples ([`gravity`]);
//! 5. [`g_deflection`]: G by deflection, GUM and Monte Carlo ([`uncertainty`]);
//! 6. [`budget`]: inertia and `kappa = I omega_0^2` with their uncertainties;
//! 7. [`g_acceleration`]: G by the initial acceleration.
//!
//! [`summary`] formats the result for the terminal.

pub mod ar1;
pub mod budget;
pub mod clean;
pub mod damped;
pub mod equilibria;
mod error;
pub mod events;
pub mod fit;
pub mod g_acceleration;
pub mod g_deflection;
pub mod gravity;
pub mod moves;
pub mod period;
pub mod robust;
pub mod segments;
pub mod summary;
pub mod turning;
mod types;
pub mod uncertainty;

pub use clean::samples_from_track;
pub use error::AnalysisError;
pub use events::{read_events, Event, EventsError};
pub use summary::Summary;
pub use types::{
    AccelerationResult, Analysis, AnalysisOptions, PullCorrections, RefusedSegment, Sample,
    SegmentResult,
};

use crate::physics;
use crate::setup::Setup;
use crate::units::Measured;
use g_acceleration::AccelerationInput;
use gravity::Apparatus;
use std::f64::consts::PI;

/// Run the whole analysis. `events`, when given, are the logged mass moves (read as described in
/// [`events`]); otherwise the moves are found in the trace.
pub fn analyze(
    samples: &[Sample],
    setup: &Setup,
    events: Option<&[Event]>,
    opts: &AnalysisOptions,
) -> Result<Analysis, AnalysisError> {
    let mut warnings: Vec<String> = Vec::new();
    for k in &setup.without_uncertainty {
        warnings.push(format!(
            "setup {k} has no uncertainty: counted as exact in the budget"
        ));
    }
    let clean = clean::clean_samples(samples, &mut warnings)?;
    let (t, y) = (&clean.t[..], &clean.y[..]);
    let found = moves::find_moves(t, y, events, opts, &mut warnings)?;
    let (moves, fitted) = fit::fit_run(t, y, &found, opts, &mut warnings)?;
    let omega0 = fitted.omega0;
    let period0 = 2.0 * PI / omega0.value;
    let (segments, refused) = equilibria::segment_results(t, y, fitted.segs, period0);
    let outliers = segments.iter().map(|s| s.outliers).sum();
    let deflection = equilibria::combine_equilibria(&segments, &refused, &mut warnings)?;
    let period = Measured::new(period0, 2.0 * PI * omega0.u / omega0.value.powi(2));
    let apparatus = Apparatus::from_setup(setup);
    let (g, g_mc) = g_deflection::g_by_deflection(&apparatus, &deflection, period, opts)?;
    let beam = budget::beam_budget(&apparatus, period)?;
    let accel_input = AccelerationInput {
        t,
        y,
        moves: &moves,
        bounds: &fitted.bounds,
        guard: found.guard,
        period0,
        omega0,
        gamma_v: fitted.gamma_v,
        omega_d: fitted.omega_d,
    };
    let acceleration = g_acceleration::g_by_acceleration(
        &apparatus,
        &accel_input,
        &deflection,
        opts,
        &mut warnings,
    );
    Ok(Analysis {
        samples_used: t.len(),
        dropped_nonfinite: clean.dropped,
        gaps: clean.gaps,
        spectrum: found.spectrum,
        detection: found.detection,
        moves,
        moves_from_events: found.from_events,
        moves_logged: if found.from_events {
            found.moves.clone()
        } else {
            Vec::new()
        },
        segments,
        refused,
        outliers,
        omega0,
        gamma: fitted.gamma,
        period,
        period_birge: fitted.birge,
        inertia: beam.inertia,
        kappa: beam.kappa,
        beta: beam.beta,
        pull: pull_corrections(&apparatus, deflection.theta_g.value),
        codata_relative_difference: g.value / physics::G_CODATA_2018 - 1.0,
        deflection,
        g,
        g_mc,
        acceleration,
        warnings,
    })
}

/// The rod's share and the stiffness's share of the torque, at the measured deflection `theta`.
fn pull_corrections(apparatus: &Apparatus, theta: f64) -> PullCorrections {
    let pull = apparatus.pull();
    let total = pull.torque_per_g(0.0);
    PullCorrections {
        rod: pull.rod_torque_per_g(0.0) / pull.spheres_torque_per_g(0.0),
        stiffness: theta * pull.stiffness_per_g() / total,
    }
}
