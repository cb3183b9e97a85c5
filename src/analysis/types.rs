//! The analysis' data: the samples it takes, the knobs it has, and what it finds (per segment, by
//! the acceleration method, and for the whole run).

use super::damped::DampedFit;
use super::{gravity, period, segments, uncertainty};
use crate::units::Measured;

/// One sample of the twist angle.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Sample {
    /// Seconds since the start of the run.
    pub t: f64,
    /// Twist angle, rad.
    pub theta: f64,
}

/// Knobs of the analysis; the defaults suit a typical run.
#[derive(Debug, Clone, PartialEq)]
pub struct AnalysisOptions {
    /// Fit a linear drift in each segment.
    pub fit_drift: bool,
    /// Segments shorter than this many periods do not contribute to the period.
    pub min_periods: f64,
    /// Length of the windows either side of a move for the acceleration method, in periods.
    pub accel_window_periods: f64,
    /// Samples within this many periods of a move found in the trace are left out of the fits (the
    /// found time is uncertain by a small fraction of a period).
    pub detect_guard_periods: f64,
    /// Samples within this many periods after each move are left out of the fits while the masses
    /// come to rest (and, for logged moves, also before each move until its time is refined).
    pub settle_periods: f64,
    /// A logged move's time is refined from the data within this many periods of the logged time
    /// (0: used as logged).
    pub refine_reach_periods: f64,
    /// Name of the events file, for messages.
    pub events_file: Option<String>,
    /// Monte Carlo draws (JCGM 101 asks for at least 1e5 for a 95 % interval to two digits).
    pub mc_draws: usize,
    pub mc_seed: u64,
}

impl Default for AnalysisOptions {
    fn default() -> Self {
        Self {
            fit_drift: true,
            min_periods: 1.5,
            accel_window_periods: 0.5,
            detect_guard_periods: 0.05,
            settle_periods: 0.1,
            refine_reach_periods: 0.25,
            events_file: None,
            mc_draws: 200_000,
            mc_seed: 20_181,
        }
    }
}

/// One segment's results.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct SegmentResult {
    pub index: usize,
    pub label: String,
    /// Segment start and end, s.
    pub start: f64,
    pub end: f64,
    /// Time the equilibrium refers to (midway through the fitted samples), s.
    pub t_ref: f64,
    /// Samples fitted.
    pub points: usize,
    /// Stray samples left out of the fit (residual over five robust standard deviations).
    pub outliers: usize,
    /// Fitted equilibrium, rad.
    pub equilibrium: Measured,
    /// Natural period from this segment's own fit, s (`None` when too short).
    pub period: Option<Measured>,
    /// Amplitude 1/e time `1/gamma`, s (infinite when no damping is seen).
    pub damping_time: f64,
    /// Root-mean-square residual, rad.
    pub residual_rms: f64,
    /// Whether this segment's period entered the combined period.
    pub used_for_period: bool,
    /// Why not, or other remarks.
    pub note: Option<String>,
    /// Rest point from the turning points, rad.
    pub turning_rest: Option<Measured>,
    pub fit: DampedFit,
}

/// A segment that gave no equilibrium, and why.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct RefusedSegment {
    pub index: usize,
    pub label: String,
    /// Segment start and end, s.
    pub start: f64,
    pub end: f64,
    pub reason: String,
}

/// G by the initial-acceleration method.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct AccelerationResult {
    pub acceleration: gravity::Acceleration,
    pub g: uncertainty::Gum,
    /// `G_acceleration / G_deflection = alpha / (2 omega_0^2 theta_G)`; the apparatus' geometry cancels,
    /// so its uncertainty is the statistical one only.
    pub ratio_to_deflection: Measured,
}

/// Everything the analysis found.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Analysis {
    /// Samples used (finite).
    pub samples_used: usize,
    /// Samples dropped for a non-finite time or angle.
    pub dropped_nonfinite: usize,
    /// Gaps longer than three sample spacings, `(from, to)` s.
    pub gaps: Vec<(f64, f64)>,
    pub spectrum: period::Spectrum,
    /// The step detector's output when the moves were found in the trace.
    pub detection: Option<segments::Detection>,
    /// Times of the mass moves between segments, s.
    pub moves: Vec<f64>,
    pub moves_from_events: bool,
    /// The moves' times as logged in the events file, s (empty when found in the trace).
    pub moves_logged: Vec<f64>,
    pub segments: Vec<SegmentResult>,
    /// Segments that gave no equilibrium, each with its reason.
    pub refused: Vec<RefusedSegment>,
    /// Stray samples left out of the segment fits, in all.
    pub outliers: usize,
    /// Combined natural angular frequency, rad/s.
    pub omega0: Measured,
    /// Combined decay rate, 1/s.
    pub gamma: Measured,
    /// Natural period `2 pi / omega_0`, s.
    pub period: Measured,
    /// Birge ratio of the segments' periods (sqrt of chi^2 per degree of freedom), when two or more.
    pub period_birge: Option<f64>,
    /// Moment of inertia of the beam, kg m^2.
    pub inertia: Measured,
    /// Torsion constant, N m / rad.
    pub kappa: Measured,
    pub deflection: gravity::Deflection,
    /// Far-sphere correction `beta`.
    pub beta: f64,
    /// The pull on the rod and the spheres' stiffness, as fractions of the torque.
    pub pull: PullCorrections,
    /// G by deflection, first-order (GUM) with its budget.
    pub g: uncertainty::Gum,
    /// G by deflection, Monte Carlo (JCGM 101).
    pub g_mc: uncertainty::MonteCarlo,
    pub acceleration: Option<AccelerationResult>,
    /// `G / G_CODATA2018 - 1`.
    pub codata_relative_difference: f64,
    pub warnings: Vec<String>,
}

/// How much the parts of the pull beyond the small spheres change the torque that G divides by.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct PullCorrections {
    /// The rod's pull as a fraction of the small spheres' (far spheres included in both).
    pub rod: f64,
    /// `theta_G tau' / tau_0`: the share of the torque taken off for the spheres' stiffness.
    pub stiffness: f64,
}
