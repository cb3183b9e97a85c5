//! Driving a run: pull every delivery from a source, hand frames to the spot tracker, pass one
//! [`TrackRow`] per frame to a sink (usually a [`crate::export::track_csv::TrackWriter`]) and count
//! what happened. Shared by `spotlever track` and the demo.

use super::{Delivery, FrameSource, SourceError};
use crate::export::track_csv::TrackRow;
use crate::frame::Frame;
use crate::spot::{SpotFix, SpotStatus, Tracker};
use std::time::{Duration, Instant};

/// At most this many unreadable-frame reasons are kept for the closing summary.
const NOTES_KEPT: usize = 20;

/// Counts of a finished (or stopped) run.
#[derive(Debug, Default)]
pub struct RunSummary {
    pub frames: u64,
    pub ok: u64,
    pub saturated: u64,
    pub lost: u64,
    pub ambiguous: u64,
    pub unreadable: u64,
    pub elapsed: Duration,
    /// Why some frames were unreadable (the first few).
    pub unreadable_notes: Vec<String>,
    /// Set when the source stopped early but the rows before are good (a truncated video).
    pub stopped: Option<SourceError>,
}

impl RunSummary {
    /// Frames per second of wall time.
    pub fn speed(&self) -> f64 {
        self.frames as f64 / self.elapsed.as_secs_f64().max(1e-9)
    }

    fn count(&mut self, status: SpotStatus) {
        self.frames += 1;
        match status {
            SpotStatus::Ok => self.ok += 1,
            SpotStatus::Saturated => self.saturated += 1,
            SpotStatus::Lost => self.lost += 1,
            SpotStatus::Ambiguous => self.ambiguous += 1,
            SpotStatus::Unreadable => self.unreadable += 1,
        }
    }
}

impl std::fmt::Display for RunSummary {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{} frames in {:.1} s ({:.1} frames/s): {} ok, {} saturated, {} lost, {} ambiguous, {} unreadable",
            self.frames,
            self.elapsed.as_secs_f64(),
            self.speed(),
            self.ok,
            self.saturated,
            self.lost,
            self.ambiguous,
            self.unreadable
        )
    }
}

/// Run `source` through `tracker`. `sink` gets each row with its frame (none for an unreadable one);
/// `progress` is called after each row. A fatal source error is returned; a truncated video ends the
/// run normally with [`RunSummary::stopped`] set.
pub fn run_tracker<E: From<SourceError>>(
    source: &mut dyn FrameSource,
    tracker: &mut Tracker,
    mut sink: impl FnMut(&TrackRow, Option<&Frame>) -> Result<(), E>,
    mut progress: impl FnMut(&RunSummary),
) -> Result<RunSummary, E> {
    let start = Instant::now();
    let mut s = RunSummary::default();
    // A source that cuts its pictures down: positions are given in the whole picture's pixels.
    let crop = source.info().crop;
    while let Some(d) = source.next_delivery() {
        let d = match d {
            Ok(d) => d,
            Err(e @ SourceError::Truncated { .. }) => {
                s.stopped = Some(e);
                break;
            }
            Err(e) => return Err(e.into()),
        };
        let (row, frame) = match &d {
            Delivery::Frame(f) => {
                let mut fix = tracker.process(&f.plane);
                if let Some(r) = crop {
                    fix.position = fix.position.map(|p| r.to_picture(p));
                }
                (
                    TrackRow {
                        frame: f.index,
                        t: f.t,
                        fix,
                        screen: None,
                    },
                    Some(f),
                )
            }
            Delivery::Unreadable {
                index,
                t,
                origin,
                reason,
            } => {
                if s.unreadable_notes.len() < NOTES_KEPT {
                    s.unreadable_notes.push(format!("{origin}: {reason}"));
                }
                (
                    TrackRow {
                        frame: *index,
                        t: *t,
                        fix: SpotFix::without_position(SpotStatus::Unreadable),
                        screen: None,
                    },
                    None,
                )
            }
        };
        sink(&row, frame)?;
        if let Delivery::Frame(f) = d {
            source.recycle(f);
        }
        s.count(row.fix.status);
        s.elapsed = start.elapsed();
        progress(&s);
    }
    s.elapsed = start.elapsed();
    Ok(s)
}
