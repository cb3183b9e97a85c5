//! Result outputs of the analysis: one file per format. Writers flush as they go, so a killed run keeps
//! what it wrote. (The track file, the hand-off between tracking and analysis, is [`crate::track`]'s.)

pub mod angle_csv;
pub mod report_svg;
pub mod result_json;
pub mod segments_csv;
