//! Predictions for a design: torque, torsion constant, period, deflection, spot travel, settling time,
//! fibre stress, and how strongly the deflection depends on each design parameter, all with
//! uncertainties propagated from the setup file's stated ones.

use crate::calib::Calibration;
use crate::lever::Lever;
use crate::physics;
use crate::plan::fibre::{kappa_of, section_area, Fibre};
use crate::plan::propagate::{propagate, Contribution};
use crate::plan::PlanError;
use crate::setup::{ScaleShape, Setup};
use crate::units::{Measured, Radians, ScreenPoint};
use serde::Serialize;

/// Standard acceleration of gravity, m s^-2 (the conventional value adopted by the 3rd CGPM, 1901).
pub const STANDARD_GRAVITY: f64 = 9.806_65;

/// A spot travel smaller than this many times the tracker's noise counts as not measurable
/// (common practice, no source: a comfortable margin for finding two rest points).
pub const MEASURABLE_FACTOR: f64 = 10.0;

/// A fibre loaded past this fraction of its tensile strength is flagged.
pub const MAX_LOAD_FRACTION: f64 = 0.5;

/// How strongly the balance is damped.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Damping {
    /// Amplitude 1/e time, s.
    Time(f64),
    /// Quality factor Q = omega_0 tau / 2.
    Quality(f64),
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

/// Tracker noise assumed when none is given, mm on the screen (common practice, no source: about 0.1 px
/// centroid noise at 2-3 px per mm).
pub const DEFAULT_NOISE_MM: f64 = 0.05;

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

/// Nominal outputs of the model for one vector of inputs.
struct Outputs {
    inertia: f64,
    torque: f64,
    kappa: f64,
    period: f64,
    theta: f64,
    travel_flat_m: f64,
    travel_curved_m: f64,
}

/// Predict what the design will show.
pub fn predict(
    setup: &Setup,
    fibre: &Fibre,
    options: &PlanOptions,
) -> Result<Prediction, PlanError> {
    let b = &setup.beam;
    let s = &setup.sources;
    let mut inputs: Vec<(String, Measured)> = vec![
        ("small mass".into(), b.small_mass),
        ("small radius".into(), b.small_radius),
        ("arm".into(), b.arm),
        ("rod mass".into(), b.rod_mass),
        ("rod length".into(), b.rod_length),
        ("extra inertia".into(), b.extra_inertia),
        ("large mass".into(), s.large_mass),
        ("separation".into(), s.separation),
        ("screen distance".into(), setup.lever.screen_distance),
        ("fibre length".into(), fibre.length),
        ("shear modulus".into(), fibre.shear_modulus),
    ];
    let n_fixed = inputs.len();
    for (name, m) in fibre.section.inputs() {
        inputs.push((name.into(), m));
    }
    inputs.push((
        "G (CODATA 2018)".into(),
        Measured::new(physics::G_CODATA_2018, physics::G_CODATA_2018_U),
    ));
    let section = fibre.section;
    let model = move |x: &[f64]| -> Outputs {
        let inertia = physics::beam_inertia(x[3], x[4], x[0], x[1], x[2], x[5]);
        let g = x[x.len() - 1];
        let torque = physics::gravitational_torque(g, x[0], x[6], x[2], x[7]);
        let sec = section.with_values(&x[n_fixed..x.len() - 1]);
        let kappa = kappa_of(x[10], &sec, x[9]);
        let theta = torque / kappa;
        let travel = |shape| {
            let lever = Lever {
                distance_m: x[8],
                zero_m: 0.0,
                shape,
            };
            lever.reading(Radians(theta)) - lever.reading(Radians(-theta))
        };
        Outputs {
            inertia,
            torque,
            kappa,
            period: physics::period(inertia, kappa),
            theta,
            travel_flat_m: travel(ScaleShape::Flat),
            travel_curved_m: travel(ScaleShape::Curved),
        }
    };
    let out = |f: fn(&Outputs) -> f64| propagate(&inputs, |x| f(&model(x)));
    let inertia = out(|o| o.inertia)?.value;
    let torque = out(|o| o.torque)?.value;
    let kappa = out(|o| o.kappa)?.value;
    let period = out(|o| o.period)?.value;
    let theta_p = out(|o| o.theta)?;
    let theta = theta_p.value;
    let mm = |m: Measured| Measured::new(m.value * 1e3, m.u * 1e3);
    let flat = mm(out(|o| o.travel_flat_m)?.value);
    let curved = mm(out(|o| o.travel_curved_m)?.value);
    let travel = match setup.lever.scale {
        ScaleShape::Flat => flat,
        ScaleShape::Curved => curved,
    };
    for (what, m) in [
        ("torque", torque),
        ("torsion constant", kappa),
        ("period", period),
        ("deflection", theta),
    ] {
        if !(m.value.is_finite() && m.u.is_finite()) {
            return Err(PlanError::Input(format!(
                "{}: the predicted {what} is not a finite number; check the setup's values",
                setup.path.display()
            )));
        }
    }
    let mut warnings = Vec::new();

    // Pixels and noise.
    let lever = Lever::from_setup(setup);
    let mut spot_travel_px = None;
    let mut px_per_mm = None;
    if let Some(cal) = &options.calibration {
        let centre = cal.to_screen(crate::units::PixelPoint {
            x: cal.image_width as f64 / 2.0,
            y: cal.image_height as f64 / 2.0,
        });
        let at = |theta: f64| {
            cal.to_image(ScreenPoint {
                x_mm: lever.reading(Radians(theta)) * 1e3,
                y_mm: centre.y_mm,
            })
        };
        let (a, c) = (at(-theta.value), at(theta.value));
        let d = ((c.x - a.x).powi(2) + (c.y - a.y).powi(2)).sqrt();
        if d.is_finite() {
            spot_travel_px = Some(d);
            px_per_mm = Some(d / travel.value);
        }
    }
    let noise_mm = match options.noise {
        None => DEFAULT_NOISE_MM,
        Some(TrackerNoise::Millimetres(n)) => n,
        Some(TrackerNoise::Pixels(p)) => match px_per_mm {
            Some(k) => p / k,
            None => {
                return Err(PlanError::Input(
                    "tracker noise was given in pixels but there is no calibration to convert it to millimetres; pass a calibration file or give the noise in mm".into(),
                ))
            }
        },
    };
    if !(noise_mm.is_finite() && noise_mm > 0.0) {
        return Err(PlanError::Input(format!(
            "the tracker noise must be a positive number (got {noise_mm} mm)"
        )));
    }
    let measurable = travel.value >= MEASURABLE_FACTOR * noise_mm;
    if !measurable {
        warnings.push(format!(
            "NOT MEASURABLE: the spot moves only {:.3} mm between the mass positions, less than {MEASURABLE_FACTOR} x the tracker noise ({noise_mm} mm); use a thinner or longer fibre, a longer lever arm to the screen, or heavier masses",
            travel.value
        ));
    }
    // Damping and settling.
    let omega0 = 2.0 * std::f64::consts::PI / period.value;
    let (damping_time_s, quality_factor) = match options.damping {
        None => (None, None),
        Some(Damping::Time(t)) if t > 0.0 && t.is_finite() => (Some(t), Some(omega0 * t / 2.0)),
        Some(Damping::Quality(q)) if q > 0.0 && q.is_finite() => (Some(2.0 * q / omega0), Some(q)),
        Some(other) => {
            return Err(PlanError::Input(format!(
                "the damping must be a positive number ({other:?})"
            )))
        }
    };
    if let Some(q) = quality_factor {
        if q < 0.5 {
            warnings.push(format!(
                "quality factor {q:.2} is below 1/2: the balance is overdamped and does not swing"
            ));
        }
    }
    let settling_1pct_s = damping_time_s.map(|t| t * 100f64.ln());
    let settling_to_noise_s = damping_time_s.map(|t| t * (travel.value / noise_mm).max(1.0).ln());

    // Fibre load.
    let area = section_area(&fibre.section.values());
    let self_mass = fibre.density * area * fibre.length.value;
    let load_kg = match fibre.load_mass {
        Some(m) => m.value,
        None => {
            warnings.push(
                "fibre load counts the rod, the two small spheres and the fibre itself; add load_mass to [fibre] to include the mirror and clamps".into(),
            );
            b.rod_mass.value + 2.0 * b.small_mass.value
        }
    } + self_mass;
    let stress = load_kg * STANDARD_GRAVITY / area;
    let safety_factor = fibre.tensile_strength / stress;
    let overloaded = stress > MAX_LOAD_FRACTION * fibre.tensile_strength;
    if overloaded {
        warnings.push(format!(
            "FIBRE OVERLOADED: stress {:.0} MPa is more than half the tensile strength ({:.0} MPa, safety factor {safety_factor:.2}); use a thicker fibre or a lighter beam",
            stress / 1e6,
            fibre.tensile_strength / 1e6
        ));
    }
    if let crate::plan::fibre::Section::Ribbon { width, thickness } = fibre.section {
        if width.value < 10.0 * thickness.value {
            warnings.push(format!(
                "the ribbon is only {:.1} times wider than thick; kappa = G w t^3 / (3 l) assumes a thin ribbon and overestimates kappa for thick ones",
                width.value / thickness.value
            ));
        }
    }
    for k in setup
        .without_uncertainty
        .iter()
        .chain(&fibre.without_uncertainty)
    {
        warnings.push(format!("{k} has no uncertainty; it is counted as exact"));
    }

    let mut theta_sensitivity: Vec<Contribution> = theta_p
        .contributions
        .into_iter()
        .filter(|c| c.relative_sensitivity.abs() > 1e-9 || c.u_contribution > 0.0)
        .collect();
    theta_sensitivity.sort_by(|a, b| {
        b.relative_sensitivity
            .abs()
            .total_cmp(&a.relative_sensitivity.abs())
    });

    Ok(Prediction {
        inertia_kg_m2: inertia,
        torque_n_m: torque,
        kappa_n_m_per_rad: kappa,
        period_s: period,
        theta_rad: theta,
        spot_travel_mm: travel,
        spot_travel_flat_mm: flat,
        spot_travel_curved_mm: curved,
        spot_travel_px,
        tracker_noise_mm: noise_mm,
        damping_time_s,
        quality_factor,
        settling_1pct_s,
        settling_to_noise_s,
        load_kg,
        stress_pa: stress,
        tensile_strength_pa: fibre.tensile_strength,
        safety_factor,
        measurable,
        overloaded,
        theta_sensitivity,
        warnings,
    })
}
