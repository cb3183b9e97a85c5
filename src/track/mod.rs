//! The track stage: from frames to the track file, the hand-off between tracking and analysis.
//!
//! - [`row`]: one frame's row; [`write`] and [`read`]: the track file (CSV) out and back in;
//! - [`screen`]: pixels to screen millimetres, applied once, by the driver;
//! - [`drive`]: a source through the spot tracker, row by row; [`summary`]: what a run counted;
//! - [`to_file`]: a whole run into a track file, as `spotlever track` and the demo do it;
//! - [`error`]: what can go wrong, naming the file, line or frame.

pub mod drive;
pub mod error;
pub mod read;
pub mod row;
pub mod screen;
pub mod summary;
pub mod to_file;
pub mod write;

pub use drive::run_tracker;
pub use error::{TrackFileError, TrackRunError};
pub use read::{read_track, TrackFile};
pub use row::TrackRow;
pub use screen::ScreenMap;
pub use summary::RunSummary;
pub use to_file::{spot_config_for, track_to_file};
pub use write::{TrackWriter, TRACK_KIND};
