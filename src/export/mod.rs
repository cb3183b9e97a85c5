//! Outputs: one file per format. Writers flush as they go, so a killed run keeps what it wrote.

pub mod angle_csv;
pub mod report_svg;
pub mod result_json;
pub mod segments_csv;
