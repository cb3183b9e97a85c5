//! Result outputs of the analysis: one file per format. Writers flush as they go, so a killed run keeps
//! what it wrote. [`write_results`] writes all of an analysis' files into one folder. (The track file,
//! the hand-off between tracking and analysis, is [`crate::track`]'s.)

pub mod angle_csv;
pub mod report_svg;
pub mod result_json;
mod results;
pub mod segments_csv;

pub use results::{write_results, ResultsError, RESULT_FILES};
