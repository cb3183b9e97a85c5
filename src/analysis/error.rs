//! What stops an analysis, with what to do about it.

use super::{period, uncertainty};

/// What stopped an analysis.
#[derive(Debug, thiserror::Error)]
pub enum AnalysisError {
    #[error("only {0} usable samples: at least 32 are needed")]
    TooFewSamples(usize),
    #[error("sample {index} (t = {t} s) is not later than the one before it: samples must be in time order")]
    Unordered { index: usize, t: f64 },
    #[error("the track has no screen positions (no x_mm column): track the video again with --calib CALIB so that positions are in millimetres on the screen")]
    NoScreenPositions,
    #[error("spectrum: {0}")]
    Spectrum(#[from] period::SpectrumError),
    #[error("no mass move was found in the trace and no events were given: list the times the masses were moved in an events file (header 't_s,label', one row per move with the position moved to, e.g. '1800,B' then '3600,A') and pass it with --events")]
    NoMoves,
    #[error("only one segment: G needs the equilibria of both mass positions (at least one move)")]
    OneSegment,
    #[error(
        "fewer than two segments gave an equilibrium, and G needs both mass positions:{reasons}"
    )]
    TooFewEquilibria {
        /// One line per refused segment: why.
        reasons: String,
    },
    #[error("{file}: no move lies inside the track ({t_first} s to {t_last} s): G needs the equilibria of both mass positions; check that the events and the track come from the same run")]
    NoMovesInTrack {
        file: String,
        t_first: f64,
        t_last: f64,
    },
    #[error("no segment gives the period (period about {period:.1} s):{reasons}\nrecord at least {min} periods between moves, with a swing well above the noise")]
    NoPeriod {
        min: f64,
        period: f64,
        /// One line per segment: why it was refused.
        reasons: String,
    },
    #[error("{what}: the values to combine have no uncertainty (zero or missing), so they cannot be weighted; the fits are degenerate (noise-free or too few samples)")]
    ZeroUncertainty { what: &'static str },
    #[error("uncertainty propagation: {0}")]
    Propagation(#[from] uncertainty::PropagationError),
}
