//! One recording session from start to clean close: prepares the run folder, starts the reading
//! thread, feeds frames to the live loop, obeys keys, typed commands and stop signals, keeps the
//! display up to date, marks gaps when the source stops, and closes the run with a summary.

use super::events::EventLog;
use super::feed::{self, Feed, OnFault, Opener};
use super::input::{stop_signal, Command, Controls};
use super::keep::FrameKeeper;
use super::live::{LiveLoop, LiveSetup, TimeBase};
use super::run_dir::{Existing, RunDir, SessionMeta};
use super::view::{status_line, Snapshot, TerminalView};
use super::RecordError;
use crate::calib::Calibration;
use crate::frame::Channel;
use crate::source::Delivery;
use crate::spot::SpotConfig;
use crate::track::TrackWriter;
use crate::units::Seconds;
use std::fmt;
use std::io::Write;
use std::path::PathBuf;
use std::time::{Duration, Instant, SystemTime, UNIX_EPOCH};

/// How the session shows its progress.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Display {
    /// The full-screen terminal display, with keys.
    Terminal,
    /// A plain status line on standard output this often.
    Lines { every: Duration },
    /// Nothing (library use, benchmarks).
    Silent,
}

/// Everything a session needs besides the source.
pub struct SessionConfig {
    pub out: PathBuf,
    pub existing: Existing,
    /// "camera" or "replay", for the metadata.
    pub source_kind: String,
    /// Camera name or replayed path.
    pub source_name: String,
    pub fps_requested: Option<f64>,
    /// Nominal frame interval, for counting dropped frames from gaps in time.
    pub frame_interval_s: Option<f64>,
    pub channel: Channel,
    /// Calibration file name and its contents.
    pub calibration: Option<(String, Calibration)>,
    pub spot: SpotConfig,
    /// Keep every Nth frame as JPEG (0: none).
    pub keep_every: u64,
    pub display: Display,
    pub controls: Controls,
    /// Stop after this much run time, s.
    pub duration_s: Option<f64>,
    pub on_fault: OnFault,
    /// With retries: mark a gap when no frame came for this long.
    pub stall_after: Duration,
    /// Run seconds per wall-clock second while frames arrive (1 for a camera, the factor of a
    /// paced replay, 0 for a replay at full speed); dates events between frames.
    pub run_per_wall: f64,
    /// Whether the source's times are on the session's own monotonic clock (a camera): a continued run
    /// then places them by the wall clock since the run's first session, so the time axis stays true
    /// across the pause.
    pub clock_times: bool,
}

/// Why a session ended.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum StoppedBy {
    QuitKey,
    Signal(&'static str),
    EndOfSource,
    Duration,
}

impl fmt::Display for StoppedBy {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            StoppedBy::QuitKey => write!(f, "quit command"),
            StoppedBy::Signal(s) => write!(f, "{s}"),
            StoppedBy::EndOfSource => write!(f, "end of source"),
            StoppedBy::Duration => write!(f, "duration reached"),
        }
    }
}

/// What a closed session did.
#[derive(Debug, Clone, PartialEq)]
pub struct Summary {
    pub out: PathBuf,
    pub appended: bool,
    pub rows: u64,
    pub found: u64,
    pub unreadable: u64,
    pub dropped: u64,
    pub gaps: u64,
    pub events: u64,
    pub kept: u64,
    pub first_t: Option<f64>,
    pub last_t: Option<f64>,
    pub elapsed_s: f64,
    pub stopped_by: StoppedBy,
}

impl fmt::Display for Summary {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let pct = if self.rows > 0 {
            100.0 * self.found as f64 / self.rows as f64
        } else {
            0.0
        };
        writeln!(
            f,
            "run {} {} ({})",
            self.out.display(),
            if self.appended {
                "continued"
            } else {
                "recorded"
            },
            self.stopped_by
        )?;
        writeln!(
            f,
            "  frames      {} in {:.1} s wall time; run times {} .. {} s",
            self.rows,
            self.elapsed_s,
            self.first_t.map_or("-".into(), |t| format!("{t:.3}")),
            self.last_t.map_or("-".into(), |t| format!("{t:.3}"))
        )?;
        writeln!(f, "  spot found  {} ({pct:.1}%)", self.found)?;
        writeln!(
            f,
            "  faults      {} unreadable, {} dropped, {} gaps",
            self.unreadable, self.dropped, self.gaps
        )?;
        writeln!(f, "  events      {} marked in events.csv", self.events)?;
        write!(f, "  kept        {} frames in frames/", self.kept)
    }
}

fn unix_now() -> f64 {
    SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map_or(0.0, |d| d.as_secs_f64())
}

/// RFC 3339 UTC text of a Unix time (whole seconds).
pub fn utc_text(unix_s: f64) -> String {
    crate::calib::file::rfc3339_from_unix(unix_s.floor() as i64)
}

/// Run one session to its end. `opener` opens the source inside the reading thread.
pub fn record(cfg: SessionConfig, opener: Opener) -> Result<Summary, RecordError> {
    let run = RunDir::prepare(&cfg.out, cfg.existing)?;
    let with_mm = cfg.calibration.is_some();
    if let Some(r) = &run.resume {
        if r.has_mm != with_mm {
            return Err(RecordError::Metadata {
                path: run.track_path(),
                message: if r.has_mm {
                    "this run has millimetre columns; continue it with the same --calib".into()
                } else {
                    "this run has no millimetre columns; continue it without --calib".into()
                },
            });
        }
    }
    let started = Instant::now();
    let started_unix = unix_now();
    let time_base = match run.resume {
        None => TimeBase::Offset(0.0),
        Some(r) => match (cfg.clock_times, r.last_t) {
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
    };
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
    let mut events = EventLog::open(&run.events_path())?;
    let mut run = run;
    let appended = run.resume.is_some();
    run.meta.sessions.push(SessionMeta {
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
    });
    run.save_meta()?;

    let mut live = LiveLoop::new(LiveSetup {
        spot: cfg.spot.clone(),
        calibration: cfg.calibration.map(|(_, c)| c),
        track,
        keeper,
        frame_base,
        time_base,
        frame_interval_s: cfg.frame_interval_s,
        history_s: 300.0,
    });
    if appended {
        live.note(&format!(
            "session {} started {}: continuing this run",
            run.meta.sessions.len(),
            utc_text(started_unix)
        ))?;
    }

    let handle = feed::spawn(opener, cfg.on_fault, 8);
    let mut controls = cfg.controls;
    let mut view = match cfg.display {
        Display::Terminal => Some(TerminalView::enter()?),
        _ => None,
    };
    let out_text = cfg.out.display().to_string();
    let mut source_text = cfg.source_name.clone();
    let mut last_event: Option<(f64, String)> = None;
    let mut last_arrival: Option<Instant> = None;
    let mut fault: Option<(Instant, String)> = None;
    let mut last_flush = Instant::now();
    let mut last_draw: Option<Instant> = None;
    let mut waiting_since = Instant::now();
    let mut warnings: Vec<String> = Vec::new();
    let mut offset_saved = false;
    let first_t_of_session = |live: &LiveLoop| live.counts().first_t;

    let stopped_by = 'run: loop {
        if let Some(sig) = stop_signal() {
            break StoppedBy::Signal(sig);
        }
        for c in controls.poll(&mut |w| warnings.push(w)) {
            match c {
                Command::Quit => break 'run StoppedBy::QuitKey,
                Command::Mark(label) => {
                    let t = match (live.latest(), last_arrival) {
                        (Some(l), Some(a)) => {
                            l.t.0 + a.elapsed().as_secs_f64() * cfg.run_per_wall.max(0.0)
                        }
                        (Some(l), None) => l.t.0,
                        _ => live.offset_s().unwrap_or(0.0),
                    };
                    events.mark(Seconds(t), &label)?;
                    last_event = Some((t, super::events::clean_label(&label)));
                }
            }
        }
        for w in warnings.drain(..) {
            if view.is_none() {
                eprintln!("warning: {w}");
            }
        }

        let mut budget = 64;
        let mut next = handle.next(Duration::from_millis(40));
        while let Some(item) = next {
            match item {
                Feed::Opened(info) => {
                    source_text = info.description.clone();
                    if let Some(s) = run.meta.sessions.last_mut() {
                        s.source_description = info.description;
                        s.width = info.width;
                        s.height = info.height;
                    }
                    run.save_meta()?;
                    waiting_since = Instant::now();
                }
                Feed::Delivery(d, arrived) => {
                    if let Some((since, _)) = fault.take() {
                        live.gap_ended(since.elapsed())?;
                    }
                    if let (Delivery::Frame(f), Some(s)) = (&d, run.meta.sessions.last_mut()) {
                        if s.width == 0 {
                            s.width = f.plane.width();
                            s.height = f.plane.height();
                        }
                    }
                    live.handle(d, arrived.duration_since(started).as_secs_f64())?;
                    if !offset_saved {
                        // Record the time offset as soon as it is known, so a killed session's
                        // metadata still says how its times were made.
                        offset_saved = true;
                        if let Some(s) = run.meta.sessions.last_mut() {
                            s.t_offset_s = live.offset_s().unwrap_or(0.0);
                        }
                        run.save_meta()?;
                    }
                    last_arrival = Some(arrived);
                    waiting_since = Instant::now();
                    if let (Some(d), Some(first), Some(last)) = (
                        cfg.duration_s,
                        first_t_of_session(&live),
                        live.counts().last_t,
                    ) {
                        if last - first >= d {
                            break 'run StoppedBy::Duration;
                        }
                    }
                }
                Feed::Fault(reason) => {
                    if fault.is_none() {
                        live.gap_started(&reason)?;
                        fault = Some((Instant::now(), reason));
                    }
                }
                Feed::Reopened => {}
                Feed::End => break 'run StoppedBy::EndOfSource,
                Feed::Fatal(e) => {
                    drop(view.take());
                    let _ = live.flush();
                    return Err(RecordError::Source(e));
                }
            }
            budget -= 1;
            next = if budget > 0 { handle.try_next() } else { None };
        }

        if matches!(cfg.on_fault, OnFault::Retry { .. })
            && fault.is_none()
            && waiting_since.elapsed() >= cfg.stall_after
        {
            let reason = format!(
                "no frame for {:.1} s",
                waiting_since.elapsed().as_secs_f64()
            );
            live.gap_started(&reason)?;
            fault = Some((waiting_since, reason));
        }
        if last_flush.elapsed() >= Duration::from_millis(250) {
            live.flush()?;
            last_flush = Instant::now();
        }
        let due = match cfg.display {
            Display::Terminal => Duration::from_millis(250),
            Display::Lines { every } => every,
            Display::Silent => Duration::MAX,
        };
        if last_draw.is_none_or(|t| t.elapsed() >= due) && cfg.display != Display::Silent {
            let counts = *live.counts();
            let snap = Snapshot {
                out: &out_text,
                source: &source_text,
                elapsed_s: started.elapsed().as_secs_f64(),
                latest: live.latest(),
                counts: &counts,
                fps: live.rate(),
                events: events.count(),
                last_event: last_event.as_ref().map(|(t, l)| (*t, l.as_str())),
                kept: live.kept(),
                history: live.history(),
                has_mm: live.has_mm(),
                fault: fault.as_ref().map(|(_, r)| r.as_str()),
            };
            match &mut view {
                Some(v) => v.draw(&snap)?,
                None => {
                    let mut so = std::io::stdout().lock();
                    let _ = writeln!(so, "{}", status_line(&snap));
                    let _ = so.flush();
                }
            }
            last_draw = Some(Instant::now());
        }
    };

    live.flush()?;
    drop(view);
    handle.stop();
    let counts = *live.counts();
    let elapsed_s = started.elapsed().as_secs_f64();
    if let Some(s) = run.meta.sessions.last_mut() {
        s.t_offset_s = live.offset_s().unwrap_or(0.0);
        s.ended_utc = Some(utc_text(unix_now()));
        s.frames = Some(counts.rows);
        s.duration_s = Some(elapsed_s);
        s.stopped_by = Some(stopped_by.to_string());
    }
    run.save_meta()?;
    Ok(Summary {
        out: cfg.out,
        appended,
        rows: counts.rows,
        found: counts.found,
        unreadable: counts.unreadable,
        dropped: counts.dropped,
        gaps: counts.gaps,
        events: events.count(),
        kept: live.kept(),
        first_t: counts.first_t,
        last_t: counts.last_t,
        elapsed_s,
        stopped_by,
    })
}
