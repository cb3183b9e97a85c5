//! Apparatus planning: what a design will show before it is built, and torsion-fibre trials.
//!
//! [`fibre`] reads the setup file's `[fibre]` table (material, round wire or ribbon, free length) and gives
//! the torsion constant; [`predict`] turns a setup into the expected torque, period, deflection, spot
//! travel, settling time, fibre stress and the sensitivity of the deflection to each design parameter;
//! [`trial`] goes the other way, from a measured period of a known test body to the fibre's torsion
//! constant and shear modulus; [`cautions`] holds the safety notes printed with every plan.

pub mod cautions;
pub mod fibre;
pub mod materials;
pub mod predict;
pub mod propagate;
pub mod trial;

use std::path::PathBuf;
use thiserror::Error;

/// What was wrong with a design or a fibre description.
#[derive(Debug, Error)]
pub enum PlanError {
    #[error("unknown fibre material {name:?}; known materials: {known} (or give shear_modulus and tensile_strength yourself with one of these as the base)")]
    UnknownMaterial { name: String, known: String },
    #[error("{path}: [{table}] {message}")]
    Fibre {
        path: PathBuf,
        table: String,
        message: String,
    },
    #[error("{path}: the setup file has no [fibre] table; add one with material, diameter (or width and thickness) and length, e.g.\n[fibre]\nmaterial = \"tungsten\"\ndiameter = \"30 ± 1 um\"\nlength = \"400 ± 2 mm\"")]
    NoFibre { path: PathBuf },
    #[error("{0}")]
    Input(String),
}
