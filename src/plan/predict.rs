//! Predictions for a design: torque, torsion constant, period, deflection, spot travel, settling time,
//! fibre stress, and how strongly the deflection depends on each design parameter, all with
//! uncertainties propagated from the setup file's stated ones.
//!
//! [`predict`] runs named steps one after the other: the model's inputs, the model itself (geometry and
//! torque, fibre and period, travel on the screen) propagated for each output, the travel in camera
//! pixels and the tracker noise, damping and settling, the fibre's load, the sensitivity budget and
//! finally the warnings, each step taking and giving plain values.

use crate::calib::Calibration;
use crate::lever::Lever;
use crate::physics;
use crate::physics::pull::BeamPull;
use crate::plan::fibre::{kappa_of, section_area, Fibre, Section};
use crate::plan::propagate::{propagate, Contribution, Propagated};
use crate::plan::PlanError;
use crate::setup::{Beam, ScaleShape, Setup};
use crate::units::{Measured, PixelPoint, Radians, ScreenPoint};
use std::path::Path;

pub use crate::plan::prediction::{Damping, PlanOptions, Prediction, TrackerNoise};

/// Standard acceleration of gravity, m s^-2 (the conventional value adopted by the 3rd CGPM, 1901).
pub const STANDARD_GRAVITY: f64 = 9.806_65;

/// A spot travel smaller than this many times the tracker's noise counts as not measurable
/// (common practice, no source: a comfortable margin for finding two rest points).
pub const MEASURABLE_FACTOR: f64 = 10.0;

/// A fibre loaded past this fraction of its tensile strength is flagged.
pub const MAX_LOAD_FRACTION: f64 = 0.5;

/// Tracker noise assumed when none is given, mm on the screen (common practice, no source: about 0.1 px
/// centroid noise at 2-3 px per mm).
pub const DEFAULT_NOISE_MM: f64 = 0.05;

/// The name of the model's last input, the CODATA value of G (not a design choice).
pub const G_INPUT: &str = "G (CODATA 2018)";

/// Predict what the design will show.
pub fn predict(
    setup: &Setup,
    fibre: &Fibre,
    options: &PlanOptions,
) -> Result<Prediction, PlanError> {
    let (inputs, n_fixed) = model_inputs(setup, fibre);
    let model = Model {
        n_fixed,
        section: fibre.section,
        rod_height: setup.beam.rod_height.value,
    };
    let nominal = propagate_model(&inputs, &model)?;
    let travel = match setup.lever.scale {
        ScaleShape::Flat => nominal.flat_mm,
        ScaleShape::Curved => nominal.curved_mm,
    };
    check_finite(&setup.path, &nominal)?;
    let theta = nominal.theta.value;
    let camera = options
        .calibration
        .as_ref()
        .and_then(|cal| camera_travel(&Lever::from_setup(setup), cal, theta.value, travel.value));
    let noise_mm = tracker_noise_mm(options.noise, camera.map(|c| c.px_per_mm))?;
    let settling = settling(
        options.damping,
        nominal.period.value,
        travel.value,
        noise_mm,
    )?;
    let load = fibre_load(&setup.beam, fibre);
    let mut p = Prediction {
        inertia_kg_m2: nominal.inertia,
        torque_n_m: nominal.torque,
        kappa_n_m_per_rad: nominal.kappa,
        period_s: nominal.period,
        theta_rad: theta,
        spot_travel_mm: travel,
        spot_travel_flat_mm: nominal.flat_mm,
        spot_travel_curved_mm: nominal.curved_mm,
        spot_travel_px: camera.map(|c| c.travel_px),
        tracker_noise_mm: noise_mm,
        damping_time_s: settling.damping_time_s,
        quality_factor: settling.quality_factor,
        settling_1pct_s: settling.settling_1pct_s,
        settling_to_noise_s: settling.settling_to_noise_s,
        load_kg: load.load_kg,
        stress_pa: load.stress_pa,
        tensile_strength_pa: fibre.tensile_strength,
        safety_factor: load.safety_factor,
        measurable: travel.value >= MEASURABLE_FACTOR * noise_mm,
        overloaded: load.overloaded,
        theta_sensitivity: sensitivity(nominal.theta.contributions),
        warnings: Vec::new(),
    };
    p.warnings = warnings(setup, fibre, &p);
    Ok(p)
}

// Where each input sits in the model's input vector (the section's dimensions follow the fixed ones,
// then G comes last).
const SMALL_MASS: usize = 0;
const SMALL_RADIUS: usize = 1;
const ARM: usize = 2;
const ROD_MASS: usize = 3;
const ROD_LENGTH: usize = 4;
const EXTRA_INERTIA: usize = 5;
const LARGE_MASS: usize = 6;
const SEPARATION: usize = 7;
const SCREEN_DISTANCE: usize = 8;
const FIBRE_LENGTH: usize = 9;
const SHEAR_MODULUS: usize = 10;

/// The model's named inputs in the order of the index constants above, the fibre section's dimensions
/// and G last; also how many come before the section.
fn model_inputs(setup: &Setup, fibre: &Fibre) -> (Vec<(String, Measured)>, usize) {
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
        G_INPUT.into(),
        Measured::new(physics::G_CODATA_2018, physics::G_CODATA_2018_U),
    ));
    (inputs, n_fixed)
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

/// The design's physics as a function of the input vector.
struct Model {
    /// How many inputs come before the fibre section's dimensions.
    n_fixed: usize,
    section: Section,
    /// The rod's height above the spheres' plane, m.
    rod_height: f64,
}

impl Model {
    /// Geometry and torque, fibre and period, and the travel on either kind of screen.
    fn outputs(&self, x: &[f64]) -> Outputs {
        let inertia = physics::beam_inertia(
            x[ROD_MASS],
            x[ROD_LENGTH],
            x[SMALL_MASS],
            x[SMALL_RADIUS],
            x[ARM],
            x[EXTRA_INERTIA],
        );
        let g = x[x.len() - 1];
        let pull = BeamPull {
            small_mass: x[SMALL_MASS],
            arm: x[ARM],
            rod_mass: x[ROD_MASS],
            rod_length: x[ROD_LENGTH],
            rod_height: self.rod_height,
            large_mass: x[LARGE_MASS],
            separation: x[SEPARATION],
        };
        // The separation is given with the beam at rest, so the fibre holds the pull there exactly.
        let torque = g * pull.torque_per_g(0.0);
        let sec = self.section.with_values(&x[self.n_fixed..x.len() - 1]);
        let kappa = kappa_of(x[SHEAR_MODULUS], &sec, x[FIBRE_LENGTH]);
        let theta = torque / kappa;
        let travel = |shape| {
            let lever = Lever {
                distance_m: x[SCREEN_DISTANCE],
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
    }
}

/// Each output's value with its propagated uncertainty (the deflection also with its budget).
struct Nominal {
    inertia: Measured,
    torque: Measured,
    kappa: Measured,
    period: Measured,
    theta: Propagated,
    flat_mm: Measured,
    curved_mm: Measured,
}

/// Propagate the inputs' uncertainties through the model, one output at a time.
fn propagate_model(inputs: &[(String, Measured)], model: &Model) -> Result<Nominal, PlanError> {
    let out = |f: fn(&Outputs) -> f64| propagate(inputs, |x| f(&model.outputs(x)));
    let inertia = out(|o| o.inertia)?.value;
    let torque = out(|o| o.torque)?.value;
    let kappa = out(|o| o.kappa)?.value;
    let period = out(|o| o.period)?.value;
    let theta = out(|o| o.theta)?;
    let mm = |m: Measured| Measured::new(m.value * 1e3, m.u * 1e3);
    let flat_mm = mm(out(|o| o.travel_flat_m)?.value);
    let curved_mm = mm(out(|o| o.travel_curved_m)?.value);
    Ok(Nominal {
        inertia,
        torque,
        kappa,
        period,
        theta,
        flat_mm,
        curved_mm,
    })
}

/// Refuse a design whose headline outputs are not finite numbers.
fn check_finite(path: &Path, n: &Nominal) -> Result<(), PlanError> {
    for (what, m) in [
        ("torque", n.torque),
        ("torsion constant", n.kappa),
        ("period", n.period),
        ("deflection", n.theta.value),
    ] {
        if !(m.value.is_finite() && m.u.is_finite()) {
            return Err(PlanError::NotFinite {
                path: path.to_path_buf(),
                what,
            });
        }
    }
    Ok(())
}

/// The spot travel as the camera sees it.
#[derive(Debug, Clone, Copy)]
struct CameraTravel {
    travel_px: f64,
    px_per_mm: f64,
}

/// Where the spot's two rest points fall in the image, along a line through the image centre's
/// height on the screen; `None` when the calibration gives no finite distance.
fn camera_travel(
    lever: &Lever,
    cal: &Calibration,
    theta: f64,
    travel_mm: f64,
) -> Option<CameraTravel> {
    let centre = cal.to_screen(PixelPoint {
        x: cal.image_width as f64 / 2.0,
        y: cal.image_height as f64 / 2.0,
    });
    let at = |theta: f64| {
        cal.to_image(ScreenPoint {
            x_mm: lever.reading(Radians(theta)) * 1e3,
            y_mm: centre.y_mm,
        })
    };
    let (a, c) = (at(-theta), at(theta));
    let d = ((c.x - a.x).powi(2) + (c.y - a.y).powi(2)).sqrt();
    d.is_finite().then(|| CameraTravel {
        travel_px: d,
        px_per_mm: d / travel_mm,
    })
}

/// The tracker's noise on the screen, mm: as given, converted from pixels, or the default.
fn tracker_noise_mm(noise: Option<TrackerNoise>, px_per_mm: Option<f64>) -> Result<f64, PlanError> {
    let noise_mm = match noise {
        None => DEFAULT_NOISE_MM,
        Some(TrackerNoise::Millimetres(n)) => n,
        Some(TrackerNoise::Pixels(p)) => match px_per_mm {
            Some(k) => p / k,
            None => return Err(PlanError::NoiseNeedsCalibration),
        },
    };
    if !(noise_mm.is_finite() && noise_mm > 0.0) {
        return Err(PlanError::BadNoise { noise_mm });
    }
    Ok(noise_mm)
}

/// Damping time, quality factor and settling times (all `None` without a damping).
#[derive(Debug, Clone, Copy)]
struct Settling {
    damping_time_s: Option<f64>,
    quality_factor: Option<f64>,
    settling_1pct_s: Option<f64>,
    settling_to_noise_s: Option<f64>,
}

/// From the damping as given to both its forms and the settling times.
fn settling(
    damping: Option<Damping>,
    period_s: f64,
    travel_mm: f64,
    noise_mm: f64,
) -> Result<Settling, PlanError> {
    let omega0 = 2.0 * std::f64::consts::PI / period_s;
    let (damping_time_s, quality_factor) = match damping {
        None => (None, None),
        Some(Damping::Time(t)) if t > 0.0 && t.is_finite() => (Some(t), Some(omega0 * t / 2.0)),
        Some(Damping::Quality(q)) if q > 0.0 && q.is_finite() => (Some(2.0 * q / omega0), Some(q)),
        Some(other) => return Err(PlanError::BadDamping(other)),
    };
    Ok(Settling {
        damping_time_s,
        quality_factor,
        settling_1pct_s: damping_time_s.map(|t| t * 100f64.ln()),
        settling_to_noise_s: damping_time_s.map(|t| t * (travel_mm / noise_mm).max(1.0).ln()),
    })
}

/// What hangs on the fibre and how hard that pulls on it.
#[derive(Debug, Clone, Copy)]
struct Load {
    load_kg: f64,
    stress_pa: f64,
    safety_factor: f64,
    overloaded: bool,
}

/// The fibre's load (the given load mass, or else the rod and the two small spheres, plus the fibre
/// itself), its stress and how that compares with the tensile strength.
fn fibre_load(b: &Beam, fibre: &Fibre) -> Load {
    let area = section_area(&fibre.section.values());
    let self_mass = fibre.density * area * fibre.length.value;
    let load_kg = match fibre.load_mass {
        Some(m) => m.value,
        None => b.rod_mass.value + 2.0 * b.small_mass.value,
    } + self_mass;
    let stress_pa = load_kg * STANDARD_GRAVITY / area;
    Load {
        load_kg,
        stress_pa,
        safety_factor: fibre.tensile_strength / stress_pa,
        overloaded: stress_pa > MAX_LOAD_FRACTION * fibre.tensile_strength,
    }
}

/// The deflection's budget without the inputs that do nothing, largest relative effect first.
fn sensitivity(contributions: Vec<Contribution>) -> Vec<Contribution> {
    let mut theta_sensitivity: Vec<Contribution> = contributions
        .into_iter()
        .filter(|c| c.relative_sensitivity.abs() > 1e-9 || c.u_contribution > 0.0)
        .collect();
    theta_sensitivity.sort_by(|a, b| {
        b.relative_sensitivity
            .abs()
            .total_cmp(&a.relative_sensitivity.abs())
    });
    theta_sensitivity
}

/// The notes printed under the verdict, most serious first.
fn warnings(setup: &Setup, fibre: &Fibre, p: &Prediction) -> Vec<String> {
    let mut warnings = Vec::new();
    let noise_mm = p.tracker_noise_mm;
    if !p.measurable {
        warnings.push(format!(
            "NOT MEASURABLE: the spot moves only {:.3} mm between the mass positions, less than {MEASURABLE_FACTOR} x the tracker noise ({noise_mm} mm); use a thinner or longer fibre, a longer lever arm to the screen, or heavier masses",
            p.spot_travel_mm.value
        ));
    }
    if let Some(q) = p.quality_factor {
        if q < 0.5 {
            warnings.push(format!(
                "quality factor {q:.2} is below 1/2: the balance is overdamped and does not swing"
            ));
        }
    }
    if fibre.load_mass.is_none() {
        warnings.push(
            "fibre load counts the rod, the two small spheres and the fibre itself; add load_mass to [fibre] to include the mirror and clamps".into(),
        );
    }
    if p.overloaded {
        warnings.push(format!(
            "FIBRE OVERLOADED: stress {:.0} MPa is more than half the tensile strength ({:.0} MPa, safety factor {:.2}); use a thicker fibre or a lighter beam",
            p.stress_pa / 1e6,
            fibre.tensile_strength / 1e6,
            p.safety_factor
        ));
    }
    for k in setup
        .without_uncertainty
        .iter()
        .chain(&fibre.without_uncertainty)
    {
        warnings.push(format!("{k} has no uncertainty; it is counted as exact"));
    }
    warnings
}
