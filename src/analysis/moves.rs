//! The second step: the times of the mass moves, from the events when given, otherwise found in the
//! trace (alternating between the step detector and the spectrum until the period settles), with the
//! spectrum that gives the frequency's starting guess. [`refine_moves`] sharpens found moves once the
//! segments' oscillation is known.

use super::events::{self, Event};
use super::segments::{self, Detection};
use super::{period, AnalysisError, AnalysisOptions};

/// The moves and the spectrum taken with them.
#[derive(Debug, Clone, PartialEq)]
pub struct Moves {
    /// Times of the mass moves between segments, s.
    pub moves: Vec<f64>,
    /// Position of each segment (`A` or `B`), one more than the moves.
    pub labels: Vec<String>,
    /// 1-based events-file line of each move (0 for moves found in the trace).
    pub lines: Vec<usize>,
    /// The step detector's output when the moves were found in the trace.
    pub detection: Option<Detection>,
    /// Time left out of the fits either side of each move found in the trace, s (zero for moves from
    /// events, whose fits leave out [`Moves::settle`] after each move instead).
    pub guard: f64,
    /// Time left out of the fits after each move while the masses come to rest, s.
    pub settle: f64,
    pub spectrum: period::Spectrum,
    /// Whether the moves came from the events.
    pub from_events: bool,
}

/// The moves in `(t, y)`: the moves of `events` laid against the trace ([`events::lay_out`]), or
/// found in it. Remarks (moves closer than a period) go to `warnings`.
pub fn find_moves(
    t: &[f64],
    y: &[f64],
    events: Option<&[Event]>,
    opts: &AnalysisOptions,
    warnings: &mut Vec<String>,
) -> Result<Moves, AnalysisError> {
    let n = t.len();
    let file = opts.events_file.as_deref().unwrap_or("events");
    let layout = match events {
        Some(ev) => Some(events::lay_out(ev, t[0], t[n - 1], file, warnings)?),
        None => None,
    };
    let given: Option<Vec<f64>> = layout
        .as_ref()
        .map(|l| l.moves.iter().map(|m| m.t).collect());
    let first_spec = match &given {
        Some(b) => spectrum_between(t, y, b)?,
        None => period::spectrum(
            t,
            y,
            &period::SpectrumOptions {
                differentiate: true,
                ..Default::default()
            },
        )?,
    };
    let Some(layout) = layout else {
        return detect(t, y, first_spec, opts);
    };
    let p = first_spec.period();
    for w in layout.moves.windows(2) {
        if w[1].t - w[0].t < p {
            warnings.push(format!(
                "{file}, lines {} and {}: moves {:.0} s apart, less than a period (about {p:.0} s): the segment between them cannot give its own period",
                w[0].line,
                w[1].line,
                w[1].t - w[0].t
            ));
        }
    }
    Ok(Moves {
        moves: given.unwrap_or_default(),
        labels: layout.labels(),
        lines: layout.moves.iter().map(|m| m.line).collect(),
        detection: None,
        guard: 0.0,
        settle: opts.settle_periods * p,
        spectrum: first_spec,
        from_events: true,
    })
}

/// The spectrum of the stretches between logged `moves`. Stretches all shorter than about 1.5
/// periods leave no peak above the lowest bins looked at: look again from 0.75 cycles per stretch,
/// then in the differenced whole trace (its steps become single spikes), so that the fits can say,
/// segment by segment, which are too short.
fn spectrum_between(
    t: &[f64],
    y: &[f64],
    moves: &[f64],
) -> Result<period::Spectrum, period::SpectrumError> {
    let with = |breaks: &[f64], min_cycles: f64, differentiate: bool| {
        period::spectrum(
            t,
            y,
            &period::SpectrumOptions {
                breaks: breaks.to_vec(),
                min_cycles,
                differentiate,
                ..Default::default()
            },
        )
    };
    match with(moves, 1.5, false) {
        Err(period::SpectrumError::NoPeak) => match with(moves, 0.75, false) {
            Err(period::SpectrumError::NoPeak) => with(&[], 1.5, true),
            s => s,
        },
        s => s,
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
    let count = d.moves.len();
    Ok(Moves {
        moves: d.moves.clone(),
        labels: (0..=count)
            .map(|k| if k % 2 == 0 { "A" } else { "B" }.to_string())
            .collect(),
        lines: vec![0; count],
        detection: Some(d),
        guard: opts.detect_guard_periods * s.period(),
        settle: opts.detect_guard_periods * s.period(),
        spectrum: s,
        from_events: false,
    })
}

/// Each move's time refined with the exact step response of an oscillator of decay rate `gamma`
/// (1/s) and damped angular frequency `omega_d` (rad/s), searched within `reach` periods of it and
/// between the midpoints to its neighbours; a move that cannot be refined keeps its time.
pub fn refine_moves(
    t: &[f64],
    y: &[f64],
    moves: &[f64],
    gamma: f64,
    omega_d: f64,
    reach: f64,
) -> Vec<f64> {
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
            segments::refine_move(t, y, m, lo, hi, gamma, omega_d, reach).unwrap_or(m)
        })
        .collect()
}
