//! Outputs: one file per format. Writers flush as they go, so a killed run keeps what it wrote.

pub mod track_csv;
