//! The per-frame work of a recording: find the spot, map it to the screen, write the row, keep the
//! evidence frame, and update the counters and the recent trace for the display.
//!
//! Frame numbers and times are the run's: a continued run adds an offset to the source's numbers and
//! times so that both go on increasing from where the run stopped.

use super::keep::FrameKeeper;
use super::trace::{RateMeter, TraceHistory};
use super::RecordError;
use crate::calib::Calibration;
use crate::source::Delivery;
use crate::spot::{SpotConfig, SpotFix, SpotStatus, Tracker};
use crate::track::{ScreenMap, TrackRow, TrackWriter};
use crate::units::{ScreenPoint, Seconds};
use std::time::Duration;

/// How the source's times become the run's times.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum TimeBase {
    /// Add this many seconds.
    Offset(f64),
    /// Continue a run whose last row is at `last_t`: the first frame lands `step` after it.
    After { last_t: f64, step: f64 },
}

impl TimeBase {
    fn resolve(&mut self, source_t: f64) -> f64 {
        if let TimeBase::After { last_t, step } = *self {
            *self = TimeBase::Offset(last_t + step - source_t);
        }
        match *self {
            TimeBase::Offset(o) => o,
            TimeBase::After { .. } => unreachable!("resolved above"),
        }
    }
}

/// The latest row, for the display.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Latest {
    pub frame: u64,
    pub t: Seconds,
    pub fix: SpotFix,
    pub screen: Option<ScreenPoint>,
}

/// Counts over the session.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct LiveCounts {
    /// Rows written (frames and unreadable frames).
    pub rows: u64,
    /// Rows with a usable position.
    pub found: u64,
    pub unreadable: u64,
    /// Frames the source skipped (gaps in its numbering, or in time when the frame rate is known).
    pub dropped: u64,
    /// Times the source stopped delivering.
    pub gaps: u64,
    /// First and last row time of the session.
    pub first_t: Option<f64>,
    pub last_t: Option<f64>,
}

/// Settings of the per-frame work.
pub struct LiveSetup {
    pub spot: SpotConfig,
    pub calibration: Option<Calibration>,
    pub track: TrackWriter,
    pub keeper: Option<FrameKeeper>,
    /// Added to the source's frame numbers.
    pub frame_base: u64,
    pub time_base: TimeBase,
    /// Nominal frame interval, when the source promises one (a camera's frame rate), for counting
    /// dropped frames from gaps in time.
    pub frame_interval_s: Option<f64>,
    /// Span of the recent trace kept for the display, s.
    pub history_s: f64,
}

/// The live loop's per-frame state.
pub struct LiveLoop {
    tracker: Tracker,
    screen: ScreenMap,
    track: TrackWriter,
    keeper: Option<FrameKeeper>,
    frame_base: u64,
    time_base: TimeBase,
    frame_interval_s: Option<f64>,
    last_source_index: Option<u64>,
    /// Time of the previous frame for counting drops; cleared after a marked gap.
    drop_ref_t: Option<f64>,
    counts: LiveCounts,
    latest: Option<Latest>,
    history: TraceHistory,
    rate: RateMeter,
}

impl LiveLoop {
    pub fn new(setup: LiveSetup) -> Self {
        let mut track = setup.track;
        // Rows reach the OS at least four times a second; the session also flushes when idle.
        track.set_flush_interval(Duration::from_millis(250));
        Self {
            tracker: Tracker::new(setup.spot),
            screen: ScreenMap::new(setup.calibration),
            track,
            keeper: setup.keeper,
            frame_base: setup.frame_base,
            time_base: setup.time_base,
            frame_interval_s: setup.frame_interval_s.filter(|d| d.is_finite() && *d > 0.0),
            last_source_index: None,
            drop_ref_t: None,
            counts: LiveCounts::default(),
            latest: None,
            history: TraceHistory::new(setup.history_s, 240),
            rate: RateMeter::new(3.0, 1024),
        }
    }

    /// Process one delivery that arrived at `arrival_s` (seconds on any steady clock, for the rate).
    pub fn handle(&mut self, delivery: Delivery, arrival_s: f64) -> Result<(), RecordError> {
        let (index, source_t) = match &delivery {
            Delivery::Frame(f) => (f.index, f.t.0),
            Delivery::Unreadable { index, t, .. } => (*index, t.0),
        };
        let t = source_t + self.time_base.resolve(source_t);
        let frame = self.frame_base + index;
        self.count_dropped(index, t);
        let (fix, screen) = match &delivery {
            Delivery::Frame(f) => {
                let fix = self.tracker.process(&f.plane);
                (fix, self.screen.map_opt(fix.position))
            }
            Delivery::Unreadable { .. } => {
                (SpotFix::without_position(SpotStatus::Unreadable), None)
            }
        };
        let row = TrackRow {
            frame,
            t: Seconds(t),
            fix,
            screen,
        };
        self.track.write(&row)?;
        if let (Some(k), Delivery::Frame(f)) = (&mut self.keeper, &delivery) {
            k.offer(frame, row.t, &f.plane)?;
        }
        let c = &mut self.counts;
        c.rows += 1;
        if fix.status.has_position() {
            c.found += 1;
        }
        if fix.status == SpotStatus::Unreadable {
            c.unreadable += 1;
        }
        c.first_t.get_or_insert(t);
        c.last_t = Some(t);
        let shown = match (screen, fix.position) {
            (Some(s), _) => Some(s.x_mm),
            (None, Some(p)) if !self.screen.has_mm() => Some(p.x),
            _ => None,
        };
        if let Some(v) = shown {
            self.history.push(t, v);
        }
        self.rate.tick(arrival_s);
        self.latest = Some(Latest {
            frame,
            t: row.t,
            fix,
            screen,
        });
        Ok(())
    }

    fn count_dropped(&mut self, index: u64, t: f64) {
        let by_index = match self.last_source_index {
            Some(last) if index > last + 1 => index - last - 1,
            _ => 0,
        };
        let by_time = match (self.frame_interval_s, self.drop_ref_t) {
            (Some(dt), Some(last_t)) if t > last_t => {
                let missing = ((t - last_t) / dt).round() - 1.0;
                if missing >= 1.0 {
                    missing as u64
                } else {
                    0
                }
            }
            _ => 0,
        };
        self.counts.dropped += by_index.max(by_time);
        self.last_source_index = Some(index);
        self.drop_ref_t = Some(t);
    }

    /// Mark in the track that the source stopped delivering.
    pub fn gap_started(&mut self, reason: &str) -> Result<(), RecordError> {
        self.counts.gaps += 1;
        let after = self
            .counts
            .last_t
            .map_or("the start".to_string(), |t| format!("t_s={t:.6}"));
        self.track.comment(&format!(
            "gap after {after}: {}; retrying until frames return",
            reason.replace('\n', " ")
        ))?;
        Ok(())
    }

    /// Mark in the track that frames came back after a gap of `lasted`.
    pub fn gap_ended(&mut self, lasted: Duration) -> Result<(), RecordError> {
        self.track.comment(&format!(
            "gap ended: frames again after {:.3} s without any",
            lasted.as_secs_f64()
        ))?;
        // The next frame is not a drop: the gap is accounted for.
        self.drop_ref_t = None;
        Ok(())
    }

    /// Write a comment line in the track.
    pub fn note(&mut self, text: &str) -> Result<(), RecordError> {
        Ok(self.track.comment(text)?)
    }

    /// Hand written rows to the OS.
    pub fn flush(&mut self) -> Result<(), RecordError> {
        Ok(self.track.flush()?)
    }

    pub fn counts(&self) -> &LiveCounts {
        &self.counts
    }
    pub fn latest(&self) -> Option<&Latest> {
        self.latest.as_ref()
    }
    pub fn history(&self) -> &TraceHistory {
        &self.history
    }
    /// Frames per second over the last few seconds.
    pub fn rate(&self) -> Option<f64> {
        self.rate.rate()
    }
    pub fn kept(&self) -> u64 {
        self.keeper.as_ref().map_or(0, FrameKeeper::kept)
    }
    pub fn has_mm(&self) -> bool {
        self.screen.has_mm()
    }
    /// Seconds added to the source's times (known once the first frame came).
    pub fn offset_s(&self) -> Option<f64> {
        match self.time_base {
            TimeBase::Offset(o) => Some(o),
            TimeBase::After { .. } => None,
        }
    }
}
