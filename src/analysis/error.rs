//! What stops an analysis, with what to do about it.

use super::{damped, period, uncertainty};

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
    #[error("no mass move was found in the trace and no events were given: list the times the masses were moved in an events file (header 't_s,label', one row per segment start, e.g. '0,A' then '1800,B') and pass it with --events")]
    NoMoves,
    #[error("only one segment: G needs the equilibria of both mass positions (at least one move)")]
    OneSegment,
    #[error("no segment lasts {min} periods (period about {period:.1} s): the period cannot be fitted; record longer between moves")]
    NoPeriod { min: f64, period: f64 },
    #[error("segment {segment} ({start:.1} s to {end:.1} s): {source}")]
    Fit {
        segment: usize,
        start: f64,
        end: f64,
        #[source]
        source: damped::FitError,
    },
    #[error("the events leave fewer than 32 samples after the first event at {0} s")]
    EventsAfterData(f64),
    #[error("uncertainty propagation: {0}")]
    Propagation(#[from] uncertainty::PropagationError),
}
