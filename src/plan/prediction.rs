//! The planner's plain data: what it needs besides the setup file ([`PlanOptions`]) and everything it
//! predicts for one design ([`Prediction`]).

use crate::calib::Calibration;
use crate::plan::propagate::Contribution;
use crate::units::Measured;
use serde::Serialize;

/// How strongly the balance is damped.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Damping {
    /// Amplitude 1/e time, s.
    Time(f64),
    /// Quality factor Q = omega_0 tau / 2.
    Quality(f64),
}

impl std::fmt::Display for Damping {
    /// As the option that gives it: `--damping-time 300 s` or `--quality-factor 40`.
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Damping::Time(t) => write!(f, "--damping-time {t} s"),
            Damping::Quality(q) => write!(f, "--quality-factor {q}"),
        }
    }
}

/// The tracker's position noise, one standard deviation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum TrackerNoise {
    /// On the screen, mm.
    Millimetres(f64),
    /// In the image, px (needs a calibration to convert).
    Pixels(f64),
}

/// What the planner needs besides the setup file.
#[derive(Debug, Clone, Default)]
pub struct PlanOptions {
    pub damping: Option<Damping>,
    pub noise: Option<TrackerNoise>,
    pub calibration: Option<Calibration>,
}

/// Everything the planner predicts for one design.
#[derive(Debug, Clone, Serialize)]
pub struct Prediction {
    pub inertia_kg_m2: Measured,
    #[serde(rename = "torque_N_m")]
    pub torque_n_m: Measured,
    #[serde(rename = "kappa_N_m_per_rad")]
    pub kappa_n_m_per_rad: Measured,
    pub period_s: Measured,
    pub theta_rad: Measured,
    /// Spot travel between the two mass positions' rest points on the setup's scale, mm.
    pub spot_travel_mm: Measured,
    pub spot_travel_flat_mm: Measured,
    pub spot_travel_curved_mm: Measured,
    /// The same travel in camera pixels (with a calibration).
    pub spot_travel_px: Option<f64>,
    pub tracker_noise_mm: f64,
    pub damping_time_s: Option<f64>,
    pub quality_factor: Option<f64>,
    /// Time for a swing to decay to 1 % of its start, s.
    pub settling_1pct_s: Option<f64>,
    /// Time for a swing as large as the travel to decay to the tracker's noise, s.
    pub settling_to_noise_s: Option<f64>,
    pub load_kg: f64,
    #[serde(rename = "stress_Pa")]
    pub stress_pa: f64,
    #[serde(rename = "tensile_strength_Pa")]
    pub tensile_strength_pa: f64,
    pub safety_factor: f64,
    pub measurable: bool,
    pub overloaded: bool,
    /// d ln theta_G / d ln x and uncertainty share for each input, largest effect first.
    pub theta_sensitivity: Vec<Contribution>,
    pub warnings: Vec<String>,
}
