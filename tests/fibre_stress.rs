//! The fibre's tensile stress under a trial's load, against the material's safe limit.

mod support;

use spotlever::plan::trial::{evaluate, parse_trials, PeriodSource};
use std::path::Path;
use support::cli::spotlever;

fn trial(load: &str) -> String {
    format!(
        "[[trial]]\nname = \"W30\"\nmaterial = \"tungsten\"\ndiameter = \"30 um\"\nlength = \"400 mm\"\ninertia = \"1e-5 kg m^2\"\nperiod = \"300 ± 1 s\"\nload_mass = \"{load}\"\n"
    )
}

/// Stress by hand: weight of the load and of the wire over the wire's area, with the conventional
/// standard gravity 9.80665 m s^-2 (3rd CGPM, 1901) and tungsten's 19300 kg m^-3 (handbook density,
/// quoted from memory).
fn stress_by_hand(load_kg: f64) -> f64 {
    let area = std::f64::consts::PI * 15e-6f64.powi(2);
    (load_kg + 19_300.0 * area * 0.4) * 9.80665 / area
}

#[test]
fn stress_is_weight_over_area_and_is_flagged_past_half_the_strength() {
    for (load, kg, over) in [("50 g", 0.05, false), ("100 g", 0.1, true)] {
        let trials = parse_trials(&trial(load), Path::new("t.toml")).unwrap();
        let PeriodSource::Given(p) = trials[0].period else {
            panic!("period expected")
        };
        let s = evaluate(&trials[0], p)
            .unwrap()
            .stress
            .expect("a load was given");
        let want = stress_by_hand(kg);
        assert!(
            (s.stress_pa / want - 1.0).abs() < 1e-12,
            "{} vs {want}",
            s.stress_pa
        );
        // 50 g: 0.69 GPa; 100 g: 1.39 GPa; the table's 2.5 GPa halved is 1.25 GPa.
        assert_eq!(s.overloaded, over, "{load}: {} Pa", s.stress_pa);
        assert_eq!(s.warning("W30").is_some(), over);
    }
}

#[test]
fn no_load_means_no_stress_check() {
    let text = trial("1 g").replace("load_mass = \"1 g\"\n", "");
    let trials = parse_trials(&text, Path::new("t.toml")).unwrap();
    let PeriodSource::Given(p) = trials[0].period else {
        panic!("period expected")
    };
    assert!(evaluate(&trials[0], p).unwrap().stress.is_none());
}

#[test]
fn fibre_command_warns_of_an_overloaded_fibre() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("trials.toml");
    std::fs::write(&path, trial("100 g")).unwrap();
    let out = spotlever(["fibre", path.to_str().unwrap()]);
    out.assert_ok();
    assert!(
        out.stderr.contains("FIBRE OVERLOADED") && out.stderr.contains("W30"),
        "{}",
        out.stderr
    );
    std::fs::write(&path, trial("50 g")).unwrap();
    let out = spotlever(["fibre", path.to_str().unwrap()]);
    out.assert_ok();
    assert!(!out.stderr.contains("OVERLOADED"), "{}", out.stderr);
    assert!(out.stdout.contains("safety factor"), "{}", out.stdout);
}
