//! Bad fibre descriptions are refused with a message that says what is wrong and where, and the
//! `plan` command exits non-zero; good ones print the JSON object.

mod support;

use spotlever::plan::fibre::Fibre;
use spotlever::setup::Setup;
use std::path::Path;
use support::cli::spotlever;

const BASE: &str = r#"
[beam]
small_mass = "15 ± 0.02 g"
small_radius = "6.8 ± 0.02 mm"
arm = "50 ± 0.1 mm"
rod_mass = "10 ± 0.1 g"
[sources]
large_mass = "1.5 ± 0.002 kg"
separation = "46 ± 0.1 mm"
[lever]
screen_distance = "2.5 ± 0.003 m"
zero = "0 ± 0.5 mm"
scale = "flat"
"#;

fn fibre_error(fibre: &str) -> String {
    let text = format!("{BASE}[fibre]\n{fibre}");
    let setup = Setup::parse(&text, Path::new("bad.toml")).unwrap();
    Fibre::from_setup(&setup).unwrap_err().to_string()
}

#[test]
fn unknown_material_lists_the_known_ones() {
    let e = fibre_error("material = \"unobtainium\"\ndiameter = \"30 um\"\nlength = \"400 mm\"\n");
    assert!(e.contains("unobtainium") && e.contains("bad.toml"), "{e}");
    for known in ["tungsten", "music_wire", "phosphor_bronze", "fused_silica"] {
        assert!(e.contains(known), "{e}");
    }
}

#[test]
fn negative_dimensions_are_refused() {
    let e = fibre_error("material = \"tungsten\"\ndiameter = \"-30 um\"\nlength = \"400 mm\"\n");
    assert!(
        e.contains("diameter") && e.contains("greater than zero"),
        "{e}"
    );
    let e = fibre_error("material = \"tungsten\"\ndiameter = \"30 um\"\nlength = \"-4 mm\"\n");
    assert!(
        e.contains("length") && e.contains("greater than zero"),
        "{e}"
    );
    let e = fibre_error(
        "material = \"tungsten\"\nwidth = \"1 mm\"\nthickness = \"-5 um\"\nlength = \"400 mm\"\n",
    );
    assert!(e.contains("thickness"), "{e}");
}

#[test]
fn a_ribbon_with_a_diameter_is_refused() {
    let e = fibre_error(
        "material = \"tungsten\"\ndiameter = \"30 um\"\nwidth = \"1 mm\"\nthickness = \"5 um\"\nlength = \"400 mm\"\n",
    );
    assert!(e.contains("not both") && e.contains("[fibre]"), "{e}");
    let e = fibre_error("material = \"tungsten\"\nwidth = \"1 mm\"\nlength = \"400 mm\"\n");
    assert!(e.contains("both width and thickness"), "{e}");
}

#[test]
fn unknown_keys_and_missing_tables_are_named() {
    let e = fibre_error("material = \"tungsten\"\ndiametre = \"30 um\"\nlength = \"400 mm\"\n");
    assert!(e.contains("diametre") && e.contains("accepted keys"), "{e}");
    let setup = Setup::parse(BASE, Path::new("nofibre.toml")).unwrap();
    let e = Fibre::from_setup(&setup).unwrap_err().to_string();
    assert!(
        e.contains("no [fibre] table") && e.contains("nofibre.toml"),
        "{e}"
    );
}

#[test]
fn material_values_can_be_overridden() {
    let text = format!(
        "{BASE}[fibre]\nmaterial = \"copper\"\ndiameter = \"100 um\"\nlength = \"300 mm\"\nshear_modulus = \"40 ± 2 GPa\"\ntensile_strength = \"300 MPa\"\n"
    );
    let setup = Setup::parse(&text, Path::new("x.toml")).unwrap();
    let f = Fibre::from_setup(&setup).unwrap();
    assert_eq!(f.shear_modulus.value, 40e9);
    assert_eq!(f.shear_modulus.u, 2e9);
    assert_eq!(f.tensile_strength, 300e6);
    assert_eq!(f.overridden, vec!["shear_modulus", "tensile_strength"]);
}

#[test]
fn plan_command_exits_non_zero_on_bad_input_and_prints_json_on_good() {
    let dir = tempfile::tempdir().unwrap();
    let bad = dir.path().join("bad.toml");
    std::fs::write(
        &bad,
        format!(
            "{BASE}[fibre]\nmaterial = \"cheese\"\ndiameter = \"30 um\"\nlength = \"400 mm\"\n"
        ),
    )
    .unwrap();
    let out = spotlever(["plan", bad.to_str().unwrap()]);
    let err = out.failed();
    assert!(err.contains("cheese") && err.contains("tungsten"), "{err}");

    let good = dir.path().join("good.toml");
    std::fs::write(
        &good,
        format!("{BASE}[fibre]\nmaterial = \"tungsten\"\ndiameter = \"30 ± 1 um\"\nlength = \"400 ± 2 mm\"\n"),
    )
    .unwrap();
    let out = spotlever([
        "plan",
        good.to_str().unwrap(),
        "--json",
        "--quality-factor",
        "15",
    ]);
    out.assert_ok();
    let v: serde_json::Value = serde_json::from_str(&out.stdout).unwrap();
    for key in [
        "theta_rad",
        "period_s",
        "kappa_N_m_per_rad",
        "torque_N_m",
        "spot_travel_mm",
    ] {
        let value = v[key]["value"].as_f64().unwrap_or(f64::NAN);
        let u = v[key]["u"].as_f64().unwrap_or(f64::NAN);
        assert!(value > 0.0 && u > 0.0, "{key}: {}", v[key]);
    }
    assert!(v["cautions"].as_array().is_some_and(|c| c.len() >= 4));
}
