//! What can be wrong with a design, a fibre description or a trial file, each case carrying the facts
//! (file, table, value, limit) its message is built from.
//!
//! Causes from other stages (a track file that does not read, a fit that fails) are kept as plain fields
//! and written into the message, not exposed as error sources: the message already says everything, and
//! the command line prints an error's sources after it.

use crate::analysis::damped::FitError;
use crate::analysis::period::SpectrumError;
use crate::analysis::uncertainty::PropagationError;
use crate::plan::materials::UnknownMaterial;
use crate::plan::prediction::Damping;
use crate::track::TrackFileError;
use crate::units::QuantityError;
use std::path::PathBuf;
use thiserror::Error;

/// A track used for a trial's period needs at least this many rows with a spot position.
pub const MIN_TRACK_ROWS: usize = 32;

/// What was wrong with a design, a fibre description or a trial file.
#[derive(Debug, Error)]
pub enum PlanError {
    #[error(transparent)]
    UnknownMaterial(#[from] UnknownMaterial),
    #[error("{path}: [{table}] {problem}")]
    Fibre {
        path: PathBuf,
        table: String,
        problem: Box<FibreProblem>,
    },
    #[error("{path}: the setup file has no [fibre] table; add one with material, diameter (or width and thickness) and length, e.g.\n[fibre]\nmaterial = \"tungsten\"\ndiameter = \"30 ± 1 um\"\nlength = \"400 ± 2 mm\"")]
    NoFibre { path: PathBuf },
    #[error("{path}: the predicted {what} is not a finite number; check the setup's values")]
    NotFinite { path: PathBuf, what: &'static str },
    #[error("tracker noise was given in pixels but there is no calibration to convert it to millimetres; pass a calibration file or give the noise in mm")]
    NoiseNeedsCalibration,
    #[error("the tracker noise must be a positive number (got {noise_mm} mm)")]
    BadNoise { noise_mm: f64 },
    #[error("the damping must be a positive number (got {0})")]
    BadDamping(Damping),
    #[error("uncertainty propagation failed ({0}); check the design's values")]
    Propagation(PropagationError),
    #[error("{path}: cannot read the trial file: {cause}")]
    TrialFileRead {
        path: PathBuf,
        cause: std::io::Error,
    },
    #[error("{path}: {message} (a trial file is a list of [[trial]] tables)")]
    TrialFileSyntax { path: PathBuf, message: String },
    #[error("{path}: no [[trial]] tables")]
    NoTrials { path: PathBuf },
    #[error("{trial}: the period must be a positive number of seconds (got {period_s})")]
    BadPeriod { trial: String, period_s: f64 },
    #[error("{path}: cannot write: {cause}")]
    CsvWrite { path: PathBuf, cause: csv::Error },
    #[error("{path}: {cause}")]
    TrackRead {
        path: PathBuf,
        cause: TrackFileError,
    },
    #[error("{path}: only {rows} rows with a spot position; a period fit needs at least {MIN_TRACK_ROWS} covering a few swings")]
    TrackTooFewRows { path: PathBuf, rows: usize },
    #[error("{path}: {cause}")]
    TrackSpectrum { path: PathBuf, cause: SpectrumError },
    #[error("{path}: the track covers {span_s:.1} s, less than 1.5 periods (about {period_s:.1} s); record longer")]
    TrackTooShort {
        path: PathBuf,
        span_s: f64,
        period_s: f64,
    },
    #[error("{path}: the damped fit failed: {cause}")]
    TrackFit { path: PathBuf, cause: FitError },
    #[error("{path}: the fit gave no usable frequency")]
    TrackNoFrequency { path: PathBuf },
}

/// What is wrong inside one fibre or trial table (the [`PlanError::Fibre`] message after the table).
#[derive(Debug, Error)]
pub enum FibreProblem {
    #[error("unknown key {key:?}; accepted keys: {}", accepted.join(", "))]
    UnknownKey { key: String, accepted: Vec<String> },
    #[error("{key} must be a quoted string such as \"30 ± 1 um\" (got {got})")]
    NotQuantityText { key: String, got: toml::Value },
    #[error("{key} must be a quoted string (got {got})")]
    NotText { key: String, got: toml::Value },
    #[error("{key}: {cause}")]
    Quantity { key: String, cause: QuantityError },
    #[error("{key} must be greater than zero (got {text:?}); dimensions and material values are positive")]
    NotPositive { key: String, text: String },
    #[error("{key} must be greater than zero (got {text:?})")]
    TrialNotPositive { key: String, text: String },
    #[error("material is missing; known materials: {known}")]
    NoMaterial { known: String },
    #[error(transparent)]
    Material(UnknownMaterial),
    #[error("a ribbon's thickness ({thickness_m:.3e} m) is larger than its width ({width_m:.3e} m); swap them")]
    ThickerThanWide { thickness_m: f64, width_m: f64 },
    #[error("give either diameter (round wire) or width and thickness (ribbon), not both")]
    RoundAndRibbon,
    #[error("a ribbon needs both width and thickness")]
    HalfARibbon,
    #[error(
        "the cross-section is missing: give diameter (round wire) or width and thickness (ribbon)"
    )]
    NoSection,
    #[error("length (the free, twisting length) is missing")]
    NoLength,
    #[error("inertia (the test body's moment of inertia about the fibre) is missing")]
    NoInertia,
    #[error("give either period or track, not both")]
    PeriodAndTrack,
    #[error("the period is missing: give period = \"T ± u s\" or track = \"file.csv\"")]
    NoPeriod,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn messages_name_the_value_and_what_to_do() {
        let e = PlanError::BadDamping(Damping::Time(-5.0)).to_string();
        assert_eq!(
            e,
            "the damping must be a positive number (got --damping-time -5 s)"
        );
        let e = PlanError::BadNoise { noise_mm: -1.0 }.to_string();
        assert_eq!(e, "the tracker noise must be a positive number (got -1 mm)");
        let e = PlanError::TrackTooFewRows {
            path: "swing.csv".into(),
            rows: 10,
        }
        .to_string();
        assert_eq!(e, "swing.csv: only 10 rows with a spot position; a period fit needs at least 32 covering a few swings");
        let e = PlanError::TrackTooShort {
            path: "swing.csv".into(),
            span_s: 39.04,
            period_s: 300.0,
        }
        .to_string();
        assert_eq!(e, "swing.csv: the track covers 39.0 s, less than 1.5 periods (about 300.0 s); record longer");
        let e = PlanError::Fibre {
            path: "x.toml".into(),
            table: "trial 2".into(),
            problem: Box::new(FibreProblem::PeriodAndTrack),
        }
        .to_string();
        assert_eq!(e, "x.toml: [trial 2] give either period or track, not both");
    }
}
