//! Fibre trials: torsion constant and shear modulus from a test body's period, with uncertainties.

mod support;

use spotlever::physics;
use spotlever::plan::fibre::{kappa_of, SectionValues};
use spotlever::plan::trial::{evaluate, parse_trials, PeriodSource};
use std::path::Path;
use support::cli::spotlever;

fn period_for(g: f64, d: f64, l: f64, inertia: f64) -> f64 {
    physics::period(inertia, kappa_of(g, &SectionValues::Round(d), l))
}

#[test]
fn recovers_the_shear_modulus_and_propagates_uncertainty() {
    // A steel wire of 200 um, 500 mm, shear modulus 79 GPa, with a 2.0e-4 kg m^2 test body: the period
    // computed forward from kappa = pi G r^4 / (2 l) must give G back.
    let (g, d, l, i) = (79e9, 200e-6, 0.5, 2.0e-4);
    let t = period_for(g, d, l, i);
    let text = format!(
        "[[trial]]\nname = \"steel 200\"\nmaterial = \"music_wire\"\ndiameter = \"200 ± 2 um\"\nlength = \"500 ± 1 mm\"\ninertia = \"2.0e-4 ± 2e-6 kg m^2\"\nperiod = \"{t} ± {} s\"\n",
        t * 1e-3
    );
    let trials = parse_trials(&text, Path::new("trials.toml")).unwrap();
    let PeriodSource::Given(p) = trials[0].period else {
        panic!("period expected")
    };
    let r = evaluate(&trials[0], p).unwrap();
    assert!((r.shear_modulus_pa.value / g - 1.0).abs() < 1e-9);
    // JCGM 100:2008 eq. 12 with G_s = 32 pi I l / (T^2 d^4), a product of powers I T^-2 l d^-4:
    // (u/G)^2 = (1 %)^2 + (2 * 0.1 %)^2 + (0.2 %)^2 + (4 * 1 %)^2.
    let rel = (1e-4f64 + 4e-6 + 4e-6 + 16e-4).sqrt();
    assert!(
        (r.shear_modulus_pa.relative() / rel - 1.0).abs() < 1e-4,
        "{}",
        r.shear_modulus_pa.relative()
    );
    // kappa = I (2 pi / T)^2: (u/k)^2 = (1 %)^2 + (0.2 %)^2.
    let krel = (1e-4f64 + 4e-6).sqrt();
    assert!((r.kappa_n_m_per_rad.relative() / krel - 1.0).abs() < 1e-4);
    assert!((r.ratio_to_table - 79.0 / 80.0).abs() < 1e-9);
}

#[test]
fn bad_trials_are_refused() {
    let e = parse_trials(
        "[[trial]]\nmaterial = \"tungsten\"\ndiameter = \"30 um\"\nlength = \"400 mm\"\ninertia = \"1e-6 kg m^2\"\nperiod = \"60 s\"\ntrack = \"a.csv\"\n",
        Path::new("t.toml"),
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("not both") && e.contains("trial 1"), "{e}");
    let e = parse_trials(
        "[[trial]]\nmaterial = \"tungsten\"\ndiameter = \"30 um\"\nlength = \"400 mm\"\nperiod = \"60 s\"\n",
        Path::new("t.toml"),
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("inertia"), "{e}");
    let e = parse_trials(
        "[[trial]]\nmaterial = \"tungsten\"\ndiameter = \"30 um\"\nlength = \"400 mm\"\ninertia = \"-1e-6 kg m^2\"\nperiod = \"60 s\"\n",
        Path::new("t.toml"),
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("greater than zero"), "{e}");
}

#[test]
fn fibre_command_compares_trials_side_by_side_and_writes_csv() {
    let dir = tempfile::tempdir().unwrap();
    let t1 = period_for(161e9, 50e-6, 0.3, 1e-5);
    let t2 = period_for(31e9, 100e-6, 0.3, 1e-5);
    let text = format!(
        "[[trial]]\nname = \"W50\"\nmaterial = \"tungsten\"\ndiameter = \"50 ± 1 um\"\nlength = \"300 ± 1 mm\"\ninertia = \"1e-5 ± 1e-7 kg m^2\"\nperiod = \"{t1} ± 0.1 s\"\n\n[[trial]]\nname = \"SiO2\"\nmaterial = \"fused_silica\"\ndiameter = \"100 ± 2 um\"\nlength = \"300 ± 1 mm\"\ninertia = \"1e-5 ± 1e-7 kg m^2\"\nperiod = \"{t2} ± 0.1 s\"\n"
    );
    let path = dir.path().join("trials.toml");
    std::fs::write(&path, text).unwrap();
    let csv = dir.path().join("trials.csv");
    let out = spotlever([
        "fibre",
        path.to_str().unwrap(),
        "--csv",
        csv.to_str().unwrap(),
    ]);
    out.assert_ok();
    let table = &out.stdout;
    assert!(table.contains("W50") && table.contains("SiO2"), "{table}");
    let mut r = csv::Reader::from_path(&csv).unwrap();
    let rows: Vec<csv::StringRecord> = r.records().map(|x| x.unwrap()).collect();
    assert_eq!(rows.len(), 2);
    let g_w: f64 = rows[0][11].parse().unwrap();
    let g_s: f64 = rows[1][11].parse().unwrap();
    assert!((g_w / 161e9 - 1.0).abs() < 1e-6 && (g_s / 31e9 - 1.0).abs() < 1e-6);
}
