//! spotlever: optical-lever spot tracking, screen calibration and torsion-balance analysis.
//!
//! The modules follow the data's path, one stage each:
//! [`source`] (frames) → [`spot`] (subpixel spot) → [`calib`] (pixels to screen millimetres) →
//! [`track`] (one row per frame, the track file) → [`lever`] (twist angle) → [`analysis`] (period,
//! segments, G, uncertainty) → [`export`] (result CSV, JSON, plots). [`synth`] renders scenes with
//! known truth; [`plan`] predicts what a design will show; [`record`] runs the live loop.

pub mod analysis;
pub mod calib;
pub mod error;
pub mod export;
pub mod frame;
pub mod lever;
pub mod outfile;
pub mod physics;
pub mod plan;
pub mod record;
pub mod setup;
pub mod source;
pub mod spot;
pub mod synth;
pub mod textfile;
pub mod track;
pub mod units;
