//! The planner's predictions for one hand-worked design, their propagated uncertainties, and the
//! measurability and overload flags.

use spotlever::plan::fibre::Fibre;
use spotlever::plan::predict::{predict, Damping, PlanOptions, TrackerNoise};
use spotlever::setup::Setup;
use std::path::Path;

/// A deliberately simple design: no rod, separation equal to the arm, tungsten wire with the shear
/// modulus fixed at 160 GPa so the arithmetic can be done by hand.
const DESIGN: &str = r#"
[beam]
small_mass = "15 g"
small_radius = "5 mm"
arm = "50 mm"
rod_mass = "0 g"
rod_length = "100 mm"
[sources]
large_mass = "1.0 kg"
separation = "50 mm"
[lever]
screen_distance = "2.0 m"
zero = "0 mm"
scale = "curved"
[fibre]
material = "tungsten"
shear_modulus = "160 GPa"
diameter = "20 um"
length = "500 mm"
"#;

fn plan(text: &str, options: &PlanOptions) -> spotlever::plan::predict::Prediction {
    let setup = Setup::parse(text, Path::new("design.toml")).unwrap();
    let fibre = Fibre::from_setup(&setup).unwrap();
    predict(&setup, &fibre, options).unwrap()
}

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a / b - 1.0).abs() < rel
}

#[test]
fn hand_worked_design() {
    // Common practice, no source; arithmetic by hand (5-6 significant figures, hence 1e-4 tolerance):
    // beta = d^3 / (d^2 + 4 R^2)^(3/2) with d = R: (1/sqrt 5)^3 = 0.0894427.
    // torque = 2 R G m M (1 - beta) / d^2
    //        = 2 * 0.05 * 6.6743e-11 * 0.015 * 1.0 * 0.9105573 / 0.0025 = 3.64640e-11 N m.
    // kappa = pi G_s r^4 / (2 l) = pi * 160e9 * (1e-5)^4 / (2 * 0.5) = pi * 1.6e-9 = 5.02655e-9 N m/rad.
    // theta_G = 3.64640e-11 / 5.02655e-9 = 7.25428e-3 rad.
    // inertia = 2 m (R^2 + 2 r^2 / 5) = 0.03 * (0.0025 + 1e-5) = 7.53e-5 kg m^2;
    // period = 2 pi sqrt(7.53e-5 / 5.02655e-9) = 2 pi sqrt(14980.5) = 2 pi * 122.395 = 769.03 s.
    // Curved scale: travel = 4 L theta = 8 * 7.25428e-3 m = 58.0342 mm.
    // Flat screen: 2 L tan(2 theta) = 4 tan(0.0145086) = 4 * 0.0145096 = 58.0383 mm.
    // Load 0.03 kg + fibre 19300 * pi * 1e-10 * 0.5 = 3.03e-6 kg; stress = 0.030003 * 9.80665 /
    // (pi * 1e-10) = 9.3656e8 Pa; with 2.5 GPa strength the safety factor is 2.669.
    let p = plan(DESIGN, &PlanOptions::default());
    assert!(
        close(p.torque_n_m.value, 3.64640e-11, 1e-4),
        "{:?}",
        p.torque_n_m
    );
    assert!(close(p.kappa_n_m_per_rad.value, 5.02655e-9, 1e-4));
    assert!(
        close(p.theta_rad.value, 7.25428e-3, 1e-4),
        "{:?}",
        p.theta_rad
    );
    assert!(close(p.inertia_kg_m2.value, 7.53e-5, 1e-6));
    assert!(close(p.period_s.value, 769.03, 1e-4), "{:?}", p.period_s);
    assert!(close(p.spot_travel_curved_mm.value, 58.0342, 1e-4));
    assert!(close(p.spot_travel_flat_mm.value, 58.0383, 1e-4));
    assert_eq!(p.spot_travel_mm, p.spot_travel_curved_mm);
    assert!(close(p.stress_pa, 9.3656e8, 1e-4), "{}", p.stress_pa);
    assert!(close(p.safety_factor, 2.669, 1e-3));
    assert!(p.measurable && !p.overloaded);
    // Everything exact except G: the deflection's uncertainty is G's relative one.
    assert!(close(p.theta_rad.relative(), 0.00015 / 6.6743, 1e-3));
    // The fibre diameter enters as d^-4: the largest lever on theta_G.
    assert_eq!(p.theta_sensitivity[0].name, "fibre diameter");
    assert!((p.theta_sensitivity[0].relative_sensitivity + 4.0).abs() < 1e-5);
}

#[test]
fn uncertainties_follow_the_power_law_rule() {
    // JCGM 100:2008 eq. 12: for a product of powers the relative variances add with the powers squared.
    // With only the diameter uncertain (1 %), theta_G ~ d^-4 has 4 % and the period ~ d^-2 has 2 %.
    let text = DESIGN.replace("\"20 um\"", "\"20 ± 0.2 um\"");
    let p = plan(&text, &PlanOptions::default());
    let g_rel = 0.00015 / 6.6743;
    assert!(close(
        p.theta_rad.relative(),
        (0.04f64.powi(2) + g_rel * g_rel).sqrt(),
        1e-4
    ));
    assert!(close(p.period_s.relative(), 0.02, 1e-4));
    assert!(close(p.kappa_n_m_per_rad.relative(), 0.04, 1e-4));
    assert!(close(
        p.spot_travel_mm.relative(),
        p.theta_rad.relative(),
        1e-6
    ));
}

#[test]
fn settling_time_from_damping_time_or_quality_factor() {
    // Amplitude decays as exp(-t / tau): 1 % after tau ln 100; Q = omega_0 tau / 2.
    let by_time = plan(
        DESIGN,
        &PlanOptions {
            damping: Some(Damping::Time(1000.0)),
            ..PlanOptions::default()
        },
    );
    assert!(close(
        by_time.settling_1pct_s.unwrap(),
        1000.0 * 100f64.ln(),
        1e-12
    ));
    let q = by_time.quality_factor.unwrap();
    assert!(close(
        q,
        std::f64::consts::PI / by_time.period_s.value * 1000.0,
        1e-9
    ));
    let by_q = plan(
        DESIGN,
        &PlanOptions {
            damping: Some(Damping::Quality(q)),
            ..PlanOptions::default()
        },
    );
    assert!(close(by_q.damping_time_s.unwrap(), 1000.0, 1e-9));
}

#[test]
fn flags_unmeasurable_designs() {
    // 58 mm of travel against 10 mm of noise: under ten times the noise.
    let p = plan(
        DESIGN,
        &PlanOptions {
            noise: Some(TrackerNoise::Millimetres(10.0)),
            ..PlanOptions::default()
        },
    );
    assert!(!p.measurable);
    assert!(p.warnings.iter().any(|w| w.contains("NOT MEASURABLE")));
    let p = plan(
        DESIGN,
        &PlanOptions {
            noise: Some(TrackerNoise::Millimetres(5.0)),
            ..PlanOptions::default()
        },
    );
    assert!(p.measurable);
}

#[test]
fn flags_fibres_loaded_past_half_their_strength() {
    // A 15 um wire: stress = 0.03 * 9.80665 / (pi * 7.5e-6^2) = 1.665 GPa > 1.25 GPa.
    let p = plan(
        &DESIGN.replace("\"20 um\"", "\"15 um\""),
        &PlanOptions::default(),
    );
    assert!(p.overloaded, "{}", p.stress_pa);
    assert!(p.warnings.iter().any(|w| w.contains("OVERLOADED")));
}

#[test]
fn ribbon_torsion_constant() {
    // kappa = k G_s w t^3 / l with Saint-Venant's k for w/t = 200. Roark's approximation (Roark's Formulas
    // for Stress and Strain, 7th ed., Table 10.7 case 4; quoted from memory) gives
    // k = 1/3 - 0.21 / 200 = 0.332283, so kappa = 3 k * (160e9 * 1e-3 * (5e-6)^3 / 1.5)
    // = 0.996850 * 1.33333e-8 = 1.32913e-8 (the thin-ribbon 1/3 would give 1.33333e-8).
    let text = DESIGN.replace(
        "diameter = \"20 um\"",
        "width = \"1 mm\"\nthickness = \"5 um\"",
    );
    let p = plan(&text, &PlanOptions::default());
    assert!(close(p.kappa_n_m_per_rad.value, 1.32913e-8, 1e-5));
}

#[test]
fn travel_in_pixels_and_noise_through_a_calibration() {
    // A square-on camera at 3 px/mm (pixel = 3 * mm + 160): the travel in pixels is 3 x the travel in
    // mm, and 0.3 px of tracker noise is 0.1 mm.
    use nalgebra::Matrix3;
    let h_inv = Matrix3::new(3.0, 0.0, 160.0, 0.0, 3.0, 120.0, 0.0, 0.0, 1.0);
    let cal = spotlever::calib::Calibration {
        image_width: 320,
        image_height: 240,
        h: h_inv.try_inverse().unwrap(),
        h_inv,
        rms_px: 0.0,
        rms_mm: 0.0,
        points: 4,
        source_image: "test".into(),
        created: String::new(),
        notes: String::new(),
    };
    let p = plan(
        DESIGN,
        &PlanOptions {
            noise: Some(TrackerNoise::Pixels(0.3)),
            calibration: Some(cal),
            ..PlanOptions::default()
        },
    );
    assert!(close(
        p.spot_travel_px.unwrap(),
        3.0 * p.spot_travel_mm.value,
        1e-9
    ));
    assert!(close(p.tracker_noise_mm, 0.1, 1e-9));
}
