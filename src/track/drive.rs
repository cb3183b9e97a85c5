//! Driving a run: pull every delivery from a source, hand frames to the spot tracker, map positions to
//! the screen, pass one [`TrackRow`] per frame to a sink (usually a [`super::TrackWriter`]) and count
//! what happened. Shared by `spotlever track` and the demo.

use super::row::TrackRow;
use super::screen::ScreenMap;
use super::summary::RunSummary;
use crate::frame::Frame;
use crate::source::{Delivery, FrameSource, SourceError};
use crate::spot::{SpotFix, SpotStatus, Tracker};
use std::time::Instant;

/// At most this many unreadable-frame reasons are kept for the closing summary.
const NOTES_KEPT: usize = 20;

/// Run `source` through `tracker`, giving each found position its screen position by `screen`.
/// `sink` gets each row with its frame (none for an unreadable one); `progress` is called after each row. A fatal source error is returned; a truncated video ends the
/// run normally with [`RunSummary::stopped`] set.
pub fn run_tracker<E: From<SourceError>>(
    source: &mut dyn FrameSource,
    tracker: &mut Tracker,
    screen: &ScreenMap,
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
                        screen: screen.map_opt(fix.position),
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
