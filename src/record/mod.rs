//! Live recording: the loop that reads a camera (or a replay), tracks the spot and writes the run as it
//! goes, so that a run of hours survives a crash, a kicked cable or a kill.
//!
//! A run folder holds `track.csv` (one row per frame, flushed at least twice a second), `run.toml`
//! (when and how the run was made, one entry per recording session), `events.csv` (`t_s,label`, one
//! row per marked mass move) and `frames/` (every Nth frame as JPEG with `frames/times.csv`, so the run
//! can be tracked again from its evidence frames).
//!
//! Pieces: [`run_dir`] (folder, metadata, append/replace rules), [`live`] (per-frame work),
//! [`feed`] (the reading thread, with retries for a camera that stops), [`session`] (the loop tying
//! frames, keys, signals and the display together), [`view`] (terminal display and plain status
//! lines), [`input`] (keys, stdin commands, stop signals), [`events`], [`keep`], [`trace`];
//! [`request`] and [`sources`] turn what was asked for into a session's configuration and the opener
//! of its source. The camera itself is a frame source, [`crate::source::camera`].

mod error;
pub mod events;
pub mod feed;
pub mod input;
pub mod keep;
pub mod live;
pub mod request;
pub mod run_dir;
pub mod session;
pub mod sources;
pub mod trace;
pub mod view;

pub use error::RecordError;
