//! One recording session from start to clean close: prepares the run folder, starts the reading
//! thread, feeds frames to the live loop, obeys keys, typed commands and stop signals, keeps the
//! display up to date, marks gaps when the source stops, and closes the run with a summary.
//!
//! Steps: `start` opens the run folder and notes the session, `running` does each turn of the loop
//! and the close, `summary` says how it went; `config` is what a session is told.

mod config;
mod running;
mod start;
mod summary;

pub use config::{Display, SessionConfig};
pub use summary::{StoppedBy, Summary};

use super::feed::Opener;
use super::RecordError;
use std::time::{SystemTime, UNIX_EPOCH};

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
    let opened = start::open_run(&cfg)?;
    let mut session = running::Session::begin(cfg, opened, opener)?;
    let stopped_by = session.run()?;
    session.close(stopped_by)
}
