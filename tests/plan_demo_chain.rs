//! The bundled demo run through the whole chain (`spotlever demo`): the G it finds must agree with the
//! CODATA 2018 value the frames were simulated with (G = 6.67430(15)e-11) within twice the combined
//! standard uncertainty — the analyzer's stated uncertainty, nothing tuned.

mod support;

use support::cli::{bin, run};

#[test]
fn demo_recovers_codata_g_within_twice_its_uncertainty() {
    let out_dir = tempfile::tempdir().unwrap();
    run(bin().args(["demo", "--out"]).arg(out_dir.path())).assert_ok();
    let text = std::fs::read_to_string(out_dir.path().join("analysis/result.json")).unwrap();
    let a: serde_json::Value = serde_json::from_str(&text).unwrap();
    let g = a["G"]["value"].as_f64().unwrap();
    let u = a["G"]["u"].as_f64().unwrap();
    let (codata, u_codata) = (6.674_30e-11, 0.000_15e-11);
    assert!(u > 0.0 && u < 0.05 * g, "u = {u}");
    let combined = (u * u + u_codata * u_codata).sqrt();
    assert!(
        (g - codata).abs() < 2.0 * combined,
        "G = {g} ± {u} vs CODATA 2018 {codata}"
    );
    assert!(out_dir.path().join("track.csv").is_file());
    assert!(out_dir.path().join("calibration.toml").is_file());
    for f in ["angle.csv", "segments.csv", "report.svg"] {
        assert!(out_dir.path().join("analysis").join(f).is_file(), "{f}");
    }
}

#[test]
fn demo_with_a_missing_data_folder_says_what_to_do() {
    let out = run(bin()
        .args(["demo", "--data", "/nonexistent/demo", "--out"])
        .arg(std::env::temp_dir().join("spotlever-demo-test-missing")));
    let err = out.failed();
    assert!(
        err.contains("make_demo_data") && err.contains("--data"),
        "{err}"
    );
}
