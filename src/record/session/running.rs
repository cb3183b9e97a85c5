//! A session while it runs: each turn obeys stop signals and commands, takes what the reading thread
//! delivered, marks a gap when a retried source has gone quiet, flushes the track and redraws; at
//! the end it closes the run's metadata and sums the session up.

use super::start::OpenedRun;
use super::{unix_now, utc_text, Display, SessionConfig, StoppedBy, Summary};
use crate::record::events::{clean_label, EventLog};
use crate::record::feed::{self, Feed, FeedHandle, OnFault, Opener};
use crate::record::input::{stop_signal, Command, Controls};
use crate::record::live::{LiveLoop, LiveSetup};
use crate::record::run_dir::RunDir;
use crate::record::view::{status_line, Snapshot, TerminalView};
use crate::record::RecordError;
use crate::source::{Delivery, SourceInfo};
use crate::units::Seconds;
use std::io::Write;
use std::path::PathBuf;
use std::time::{Duration, Instant};

/// Most deliveries taken in one turn before the display and the keys get their share.
const DELIVERIES_PER_TURN: u32 = 64;

/// What the session was told about pacing, stopping and showing itself.
struct Rules {
    display: Display,
    duration_s: Option<f64>,
    on_fault: OnFault,
    stall_after: Duration,
    run_per_wall: f64,
}

/// A running session. (Fields drop in this order should a step fail: the display first, so the
/// terminal is restored before anything else goes.)
pub(super) struct Session {
    view: Option<TerminalView>,
    controls: Controls,
    handle: FeedHandle,
    live: LiveLoop,
    run: RunDir,
    events: EventLog,
    rules: Rules,
    appended: bool,
    started: Instant,
    out: PathBuf,
    out_text: String,
    source_text: String,
    last_event: Option<(f64, String)>,
    last_arrival: Option<Instant>,
    /// Since when, and why, the source has not delivered.
    fault: Option<(Instant, String)>,
    last_flush: Instant,
    last_draw: Option<Instant>,
    waiting_since: Instant,
    warnings: Vec<String>,
    offset_saved: bool,
}

impl Session {
    /// Set up the live loop on the opened run, start the reading thread and the display.
    pub fn begin(
        cfg: SessionConfig,
        opened: OpenedRun,
        opener: Opener,
    ) -> Result<Session, RecordError> {
        let OpenedRun {
            run,
            track,
            keeper,
            events,
            frame_base,
            time_base,
            appended,
            started,
            started_unix,
        } = opened;
        let mut live = LiveLoop::new(LiveSetup {
            spot: cfg.spot,
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
        let view = match cfg.display {
            Display::Terminal => Some(TerminalView::enter()?),
            _ => None,
        };
        Ok(Session {
            view,
            controls: cfg.controls,
            handle,
            live,
            run,
            events,
            rules: Rules {
                display: cfg.display,
                duration_s: cfg.duration_s,
                on_fault: cfg.on_fault,
                stall_after: cfg.stall_after,
                run_per_wall: cfg.run_per_wall,
            },
            appended,
            started,
            out_text: cfg.out.display().to_string(),
            out: cfg.out,
            source_text: cfg.source_name,
            last_event: None,
            last_arrival: None,
            fault: None,
            last_flush: Instant::now(),
            last_draw: None,
            waiting_since: Instant::now(),
            warnings: Vec::new(),
            offset_saved: false,
        })
    }

    /// Turn until something stops the session.
    pub fn run(&mut self) -> Result<StoppedBy, RecordError> {
        loop {
            if let Some(stopped_by) = self.turn()? {
                return Ok(stopped_by);
            }
        }
    }

    /// One turn of the loop; `Some` when the session is to stop.
    fn turn(&mut self) -> Result<Option<StoppedBy>, RecordError> {
        if let Some(sig) = stop_signal() {
            return Ok(Some(StoppedBy::Signal(sig)));
        }
        if let Some(stopped_by) = self.obey_commands()? {
            return Ok(Some(stopped_by));
        }
        if let Some(stopped_by) = self.take_feed()? {
            return Ok(Some(stopped_by));
        }
        self.watch_for_stall()?;
        if self.last_flush.elapsed() >= Duration::from_millis(250) {
            self.live.flush()?;
            self.last_flush = Instant::now();
        }
        self.draw_if_due()?;
        Ok(None)
    }

    /// Keys or typed commands: mark events, or stop. Warnings about bad commands go to standard
    /// error unless the terminal display owns the screen.
    fn obey_commands(&mut self) -> Result<Option<StoppedBy>, RecordError> {
        let warnings = &mut self.warnings;
        let commands = self.controls.poll(&mut |w| warnings.push(w));
        for c in commands {
            match c {
                Command::Quit => return Ok(Some(StoppedBy::QuitKey)),
                Command::Mark(label) => self.mark(&label)?,
            }
        }
        for w in self.warnings.drain(..) {
            if self.view.is_none() {
                eprintln!("warning: {w}");
            }
        }
        Ok(None)
    }

    /// Mark an event now: at the latest frame's time plus the run time since it arrived.
    fn mark(&mut self, label: &str) -> Result<(), RecordError> {
        let t = match (self.live.latest(), self.last_arrival) {
            (Some(l), Some(a)) => {
                l.t.0 + a.elapsed().as_secs_f64() * self.rules.run_per_wall.max(0.0)
            }
            (Some(l), None) => l.t.0,
            _ => self.live.offset_s().unwrap_or(0.0),
        };
        self.events.mark(Seconds(t), label)?;
        self.last_event = Some((t, clean_label(label)));
        Ok(())
    }

    /// Take what the reading thread has delivered: waits a little for the first report, then takes
    /// those already waiting, up to [`DELIVERIES_PER_TURN`].
    fn take_feed(&mut self) -> Result<Option<StoppedBy>, RecordError> {
        let mut budget = DELIVERIES_PER_TURN;
        let mut next = self.handle.next(Duration::from_millis(40));
        while let Some(item) = next {
            if let Some(stopped_by) = self.on_feed(item)? {
                return Ok(Some(stopped_by));
            }
            budget -= 1;
            next = if budget > 0 {
                self.handle.try_next()
            } else {
                None
            };
        }
        Ok(None)
    }

    fn on_feed(&mut self, item: Feed) -> Result<Option<StoppedBy>, RecordError> {
        match item {
            Feed::Opened(info) => self.on_opened(info)?,
            Feed::Delivery(d, arrived) => return self.on_delivery(d, arrived),
            Feed::Fault(reason) => {
                if self.fault.is_none() {
                    self.live.gap_started(&reason)?;
                    self.fault = Some((Instant::now(), reason));
                }
            }
            Feed::Reopened => {}
            Feed::End => return Ok(Some(StoppedBy::EndOfSource)),
            Feed::Fatal(e) => {
                drop(self.view.take());
                let _ = self.live.flush();
                return Err(RecordError::Source(e));
            }
        }
        Ok(None)
    }

    /// The source opened: note what it is in the metadata.
    fn on_opened(&mut self, info: SourceInfo) -> Result<(), RecordError> {
        self.source_text = info.description.clone();
        if let Some(s) = self.run.meta.sessions.last_mut() {
            s.source_description = info.description;
            s.width = info.width;
            s.height = info.height;
        }
        self.run.save_meta()?;
        self.waiting_since = Instant::now();
        Ok(())
    }

    /// A frame (or an unreadable one) came: end a gap, track it, and stop once the duration is
    /// reached.
    fn on_delivery(
        &mut self,
        d: Delivery,
        arrived: Instant,
    ) -> Result<Option<StoppedBy>, RecordError> {
        if let Some((since, _)) = self.fault.take() {
            self.live.gap_ended(since.elapsed())?;
        }
        if let (Delivery::Frame(f), Some(s)) = (&d, self.run.meta.sessions.last_mut()) {
            if s.width == 0 {
                s.width = f.plane.width();
                s.height = f.plane.height();
            }
        }
        self.live
            .handle(d, arrived.duration_since(self.started).as_secs_f64())?;
        if !self.offset_saved {
            // Record the time offset as soon as it is known, so a killed session's metadata
            // still says how its times were made.
            self.offset_saved = true;
            if let Some(s) = self.run.meta.sessions.last_mut() {
                s.t_offset_s = self.live.offset_s().unwrap_or(0.0);
            }
            self.run.save_meta()?;
        }
        self.last_arrival = Some(arrived);
        self.waiting_since = Instant::now();
        let counts = self.live.counts();
        if let (Some(d), Some(first), Some(last)) =
            (self.rules.duration_s, counts.first_t, counts.last_t)
        {
            if last - first >= d {
                return Ok(Some(StoppedBy::Duration));
            }
        }
        Ok(None)
    }

    /// With retries, a source silent for longer than the stall time starts a gap.
    fn watch_for_stall(&mut self) -> Result<(), RecordError> {
        if matches!(self.rules.on_fault, OnFault::Retry { .. })
            && self.fault.is_none()
            && self.waiting_since.elapsed() >= self.rules.stall_after
        {
            let reason = format!(
                "no frame for {:.1} s",
                self.waiting_since.elapsed().as_secs_f64()
            );
            self.live.gap_started(&reason)?;
            self.fault = Some((self.waiting_since, reason));
        }
        Ok(())
    }

    /// Redraw the terminal display, or print a status line, when it is due.
    fn draw_if_due(&mut self) -> Result<(), RecordError> {
        let due = match self.rules.display {
            Display::Terminal => Duration::from_millis(250),
            Display::Lines { every } => every,
            Display::Silent => Duration::MAX,
        };
        if self.last_draw.is_none_or(|t| t.elapsed() >= due)
            && self.rules.display != Display::Silent
        {
            let counts = *self.live.counts();
            let snap = Snapshot {
                out: &self.out_text,
                source: &self.source_text,
                elapsed_s: self.started.elapsed().as_secs_f64(),
                latest: self.live.latest(),
                counts: &counts,
                fps: self.live.rate(),
                events: self.events.count(),
                last_event: self.last_event.as_ref().map(|(t, l)| (*t, l.as_str())),
                kept: self.live.kept(),
                history: self.live.history(),
                has_mm: self.live.has_mm(),
                fault: self.fault.as_ref().map(|(_, r)| r.as_str()),
            };
            match &mut self.view {
                Some(v) => v.draw(&snap)?,
                None => {
                    let mut so = std::io::stdout().lock();
                    let _ = writeln!(so, "{}", status_line(&snap));
                    let _ = so.flush();
                }
            }
            self.last_draw = Some(Instant::now());
        }
        Ok(())
    }

    /// Flush the track, leave the display, stop the reading thread, close the session's entry in
    /// `run.toml` and sum it up.
    pub fn close(self, stopped_by: StoppedBy) -> Result<Summary, RecordError> {
        let Session {
            view,
            handle,
            mut live,
            mut run,
            events,
            appended,
            started,
            out,
            ..
        } = self;
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
            out,
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
}
