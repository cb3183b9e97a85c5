//! Apparatus planning: what a design will show before it is built, and torsion-fibre trials.
//!
//! [`fibre`] reads the setup file's `[fibre]` table (material, round wire or ribbon, free length) and gives
//! the torsion constant; [`predict`] turns a setup into the expected torque, period, deflection, spot
//! travel, settling time, fibre stress and the sensitivity of the deflection to each design parameter;
//! [`trial`] goes the other way, from a measured period of a known test body to the fibre's torsion
//! constant and shear modulus; [`cautions`] holds the safety notes printed with every plan. [`report`] and
//! [`trial_table`] turn predictions and trial results into what the commands print; [`error`] says what
//! was wrong with a design, a fibre or a trial file.

pub mod cautions;
pub mod error;
pub mod fibre;
pub mod materials;
pub mod predict;
pub mod prediction;
pub mod propagate;
pub mod rect_torsion;
pub mod report;
pub mod segment_periods;
pub mod stress;
pub mod trial;
pub mod trial_table;

pub use error::{FibreProblem, PlanError};
