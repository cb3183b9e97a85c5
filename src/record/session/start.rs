//! A session's first steps: prepare the run folder (new, replaced or continued), open its files,
//! note the session in `run.toml`, and set up the live loop with the times and frame numbers the
//! run goes on from.

use super::{unix_now, utc_text, SessionConfig};
use crate::record::events::EventLog;
use crate::record::keep::FrameKeeper;
use crate::record::live::TimeBase;
use crate::record::run_dir::{Resume, RunDir, SessionMeta};
use crate::record::RecordError;
use crate::track::TrackWriter;
use std::time::Instant;

/// The run folder, open and noted in its metadata, with what the live loop starts from.
pub(super) struct OpenedRun {
    pub run: RunDir,
    pub track: TrackWriter,
    pub keeper: Option<FrameKeeper>,
    pub events: EventLog,
    /// Number of the session's first frame.
    pub frame_base: u64,
    pub time_base: TimeBase,
    /// Whether this session continues an earlier run.
    pub appended: bool,
    pub started: Instant,
    pub started_unix: f64,
}

/// Prepare the run folder and its files, and record the new session in `run.toml`.
pub(super) fn open_run(cfg: &SessionConfig) -> Result<OpenedRun, RecordError> {
    let mut run = RunDir::prepare(&cfg.out, cfg.existing)?;
    let with_mm = cfg.calibration.is_some();
    check_mm_columns(&run, with_mm)?;
    let started = Instant::now();
    let started_unix = unix_now();
    let time_base = time_base(run.resume, cfg.clock_times, started_unix);
    let frame_base = run.resume.map_or(0, |r| r.next_frame);
    let track_path = run.track_path();
    let track = if run.resume.is_some() {
        TrackWriter::append(&track_path, with_mm)?
    } else {
        TrackWriter::create(&track_path, with_mm)?
    };
    let keeper = if cfg.keep_every > 0 {
        Some(FrameKeeper::open(&run.frames_dir(), cfg.keep_every)?)
    } else {
        None
    };
    let events = EventLog::open(&run.events_path())?;
    let appended = run.resume.is_some();
    run.meta
        .sessions
        .push(session_meta(cfg, started_unix, frame_base));
    run.save_meta()?;
    Ok(OpenedRun {
        run,
        track,
        keeper,
        events,
        frame_base,
        time_base,
        appended,
        started,
        started_unix,
    })
}

/// A continued run keeps its columns: millimetres with a calibration, none without.
fn check_mm_columns(run: &RunDir, with_mm: bool) -> Result<(), RecordError> {
    match &run.resume {
        Some(r) if r.has_mm != with_mm => Err(RecordError::Metadata {
            path: run.track_path(),
            message: if r.has_mm {
                "this run has millimetre columns; continue it with the same --calib".into()
            } else {
                "this run has no millimetre columns; continue it without --calib".into()
            },
        }),
        _ => Ok(()),
    }
}

/// How the source's times become run times: from zero for a new run; for a continued one after its
/// last row, or (`clock_times`) by the wall clock since the run's first session, never before its
/// last row.
fn time_base(resume: Option<Resume>, clock_times: bool, started_unix: f64) -> TimeBase {
    match resume {
        None => TimeBase::Offset(0.0),
        Some(r) => match (clock_times, r.last_t) {
            (true, last) => {
                let wall = started_unix - r.first_start_unix_s;
                let floor = last.map_or(0.0, |t| t + r.step_s);
                TimeBase::Offset(if wall.is_finite() {
                    wall.max(floor)
                } else {
                    floor
                })
            }
            (false, Some(last_t)) => TimeBase::After {
                last_t,
                step: r.step_s,
            },
            (false, None) => TimeBase::Offset(0.0),
        },
    }
}

/// The metadata entry of a session as it starts.
fn session_meta(cfg: &SessionConfig, started_unix: f64, frame_base: u64) -> SessionMeta {
    SessionMeta {
        started_utc: utc_text(started_unix),
        started_unix_s: started_unix,
        source_kind: cfg.source_kind.clone(),
        source: cfg.source_name.clone(),
        fps_requested: cfg.fps_requested,
        channel: format!("{:?}", cfg.channel).to_lowercase(),
        calibration: cfg.calibration.as_ref().map(|(n, _)| n.clone()),
        calibration_rms_mm: cfg.calibration.as_ref().map(|(_, c)| c.rms_mm),
        keep_every: cfg.keep_every,
        first_frame: frame_base,
        ..Default::default()
    }
}
