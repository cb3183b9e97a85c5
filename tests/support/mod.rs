//! Helpers shared by the integration tests, included by each with `mod support;`: running the
//! `spotlever` binary ([`cli`]), clips made with the `ffmpeg` program ([`clips`]), rendered test
//! frames with known spot centres ([`frames`]) and the recorder's replayed sequences ([`record`]).
//! Each test file uses only some of them, hence the dead-code allowance.
#![allow(dead_code)]

pub mod cli;
pub mod clips;
pub mod frames;
pub mod record;

// The clip and frame helpers at the top, for `use support::*;` (unused in the tests that only run
// the binary).
#[allow(unused_imports)]
pub use clips::*;
#[allow(unused_imports)]
pub use frames::*;
