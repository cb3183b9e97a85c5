//! The scene synthesizer: ruled screens seen in perspective with a laser spot, with the truth alongside,
//! for tests, benchmarks and the bundled demo frames.

pub mod motion;
