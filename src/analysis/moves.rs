//! The second step: the times of the mass moves, from the events when given, otherwise found in the
//! trace (alternating between the step detector and the spectrum until the period settles), with the
//! spectrum that gives the frequency's starting guess. [`refine_moves`] sharpens found moves once the
//! segments' oscillation is known.

use super::segments::{self, Detection, Event};
use super::{period, AnalysisError, AnalysisOptions};

/// The moves and the spectrum taken with them.
#[derive(Debug, Clone, PartialEq)]
pub struct Moves {
    /// Times of the mass moves between segments, s.
    pub moves: Vec<f64>,
    /// The step detector's output when the moves were found in the trace.
    pub detection: Option<Detection>,
    /// Time left out of the fits either side of each move, s (zero for moves from events).
    pub guard: f64,
    pub spectrum: period::Spectrum,
    /// Whether the moves came from the events.
    pub from_events: bool,
}

/// The moves in `(t, y)`: the starts of `events` after the first (within the trace), or found in it.
pub fn find_moves(
    t: &[f64],
    y: &[f64],
    events: Option<&[Event]>,
    opts: &AnalysisOptions,
) -> Result<Moves, AnalysisError> {
    let n = t.len();
    let given: Option<Vec<f64>> = events.map(|ev| {
        ev.iter()
            .skip(1)
            .map(|e| e.t)
            .filter(|&v| v < t[n - 1])
            .collect()
    });
    let first_spec = period::spectrum(
        t,
        y,
        &period::SpectrumOptions {
            breaks: given.clone().unwrap_or_default(),
            differentiate: given.is_none(),
            ..Default::default()
        },
    )?;
    match given {
        Some(m) => Ok(Moves {
            moves: m,
            detection: None,
            guard: 0.0,
            spectrum: first_spec,
            from_events: true,
        }),
        None => detect(t, y, first_spec, opts),
    }
}

/// Moves found in the trace, starting from the spectrum `first_spec` of the differenced series.
fn detect(
    t: &[f64],
    y: &[f64],
    first_spec: period::Spectrum,
    opts: &AnalysisOptions,
) -> Result<Moves, AnalysisError> {
    // The first guess may be a sideband (phases restart at each move); alternate between
    // finding the moves and re-taking the spectrum stretch by stretch until they agree.
    let mut p = first_spec.period();
    let mut found = None;
    for _ in 0..5 {
        let d = segments::detect_moves(t, y, p, 0.0);
        if d.moves.is_empty() {
            break;
        }
        let s = period::spectrum(
            t,
            y,
            &period::SpectrumOptions {
                breaks: d.moves.clone(),
                ..Default::default()
            },
        )?;
        let settled = (s.period() / p - 1.0).abs() < 0.01;
        p = s.period();
        found = Some((d, s));
        if settled {
            break;
        }
    }
    let Some((_, s)) = found else {
        return Err(AnalysisError::NoMoves);
    };
    let d = segments::detect_moves(t, y, p, 0.0);
    if d.moves.is_empty() {
        return Err(AnalysisError::NoMoves);
    }
    Ok(Moves {
        moves: d.moves.clone(),
        detection: Some(d),
        guard: opts.detect_guard_periods * s.period(),
        spectrum: s,
        from_events: false,
    })
}

/// Each found move's time refined with the exact step response of an oscillator of decay rate
/// `gamma` (1/s) and damped angular frequency `omega_d` (rad/s), searched between the midpoints to
/// its neighbours; a move that cannot be refined keeps its time.
pub fn refine_moves(t: &[f64], y: &[f64], moves: &[f64], gamma: f64, omega_d: f64) -> Vec<f64> {
    let n = t.len();
    moves
        .iter()
        .enumerate()
        .map(|(k, &m)| {
            let lo = if k == 0 {
                t[0]
            } else {
                0.5 * (moves[k - 1] + m)
            };
            let hi = moves.get(k + 1).map_or(t[n - 1], |&nx| 0.5 * (m + nx));
            segments::refine_move(t, y, m, lo, hi, gamma, omega_d).unwrap_or(m)
        })
        .collect()
}
